//! The build page on the demo data: the part in trouble comes first, the charts carry their
//! series, and the history lists what was changed; the audit trail cannot be rewritten.

mod common;

use axum::http::StatusCode;
use common::TestApp;
use eddybench::store::UserRole;

async fn demo_app() -> (TestApp, common::Session) {
    let app = TestApp::new().await;
    eddybench::demo::seed(&app.store).await.unwrap();
    let session = app
        .login("demo", "bench-demo-2026")
        .await
        .expect("the demo login works");
    (app, session)
}

#[tokio::test]
async fn the_part_in_trouble_comes_first_with_its_numbers() {
    let (app, session) = demo_app().await;
    let page = app.get("/builds/tool-room-heater", Some(&session)).await;
    assert_eq!(page.status, StatusCode::OK);
    let rows = page.select_texts("#health li.row");
    assert!(!rows.is_empty());
    // r4 runs its polypropylene bank above the units' current rating (the demo's story).
    assert!(rows[0].contains("Tank capacitor"), "worst first: {rows:?}");
    assert_eq!(
        page.attr("#health li.row", "class").as_deref(),
        Some("row health failure")
    );
    assert!(
        rows[0].contains(" A rms"),
        "the numbers are in the words: {}",
        rows[0]
    );
    // The demo's r4 bank is wearing: unit 3's margin falls run after run and the inferred
    // capacitance drifts; both are shown, not folded away.
    let wearing = page.select_texts("#health li.row:first-child .degrading");
    assert!(
        wearing.iter().any(|w| w.contains("margin fell")),
        "{wearing:?}"
    );
    assert!(
        wearing.iter().any(|w| w.contains("capacitance drifted")),
        "{wearing:?}"
    );
    let severities: Vec<String> = page
        .html()
        .select(&scraper::Selector::parse("#health li.row").unwrap())
        .map(|e| e.value().attr("class").unwrap().to_string())
        .collect();
    let rank = |c: &str| {
        if c.contains("failure") {
            2
        } else if c.contains("warning") {
            1
        } else {
            0
        }
    };
    assert!(
        severities.windows(2).all(|w| rank(&w[0]) >= rank(&w[1])),
        "{severities:?}"
    );
}

#[tokio::test]
async fn the_charts_across_runs_carry_their_series_and_the_numbers_behind_them() {
    let (app, session) = demo_app().await;
    let page = app.get("/builds/tool-room-heater", Some(&session)).await;
    assert_eq!(page.count("#trends figure.chart svg[role=img]"), 5);
    // Each series is named at its line's end, or in a legend when the ends crowd.
    let margin_series = page.select_texts(
        "#tool-room-heater-margins g.series text.series-label, \
         #tool-room-heater-margins g.legend text.legend-label",
    );
    assert!(
        margin_series.iter().any(|s| s.starts_with("Tank capac")),
        "{margin_series:?}"
    );
    let efficiency: Vec<String> = page
        .html()
        .select(&scraper::Selector::parse("#tool-room-heater-efficiency g.series").unwrap())
        .map(|e| e.value().attr("data-series").unwrap().to_string())
        .collect();
    assert_eq!(
        efficiency,
        vec!["calorimetric", "differential", "model"],
        "each method labelled"
    );
    // Revisions are marked on the run axis, and every chart has its table.
    let marks = page.select_texts("#tool-room-heater-margins g.x-marker text");
    assert_eq!(marks, vec!["r1", "r2", "r3", "r4"]);
    assert_eq!(page.count("#trends figure.chart details.chart-numbers"), 5);
    // The numbers behind the margin chart: one row per run of this build for the tank bank.
    let captions = page.select_texts("#tool-room-heater-margins-figure details table caption");
    assert!(
        captions.contains(&"Tank capacitor".to_string()),
        "{captions:?}"
    );
    let runs = page.count("#runs li.row");
    let tank_rows =
        page.count("#tool-room-heater-margins-figure details table:first-of-type tbody tr");
    assert_eq!(tank_rows, runs, "every run has a tank capacitor margin");
}

#[tokio::test]
async fn the_history_lists_changes_and_cannot_be_rewritten() {
    let (app, session) = demo_app().await;
    app.post_form("/builds", &session, &[("name", "Audit rig")])
        .await;
    let page = app.get("/builds/audit-rig", Some(&session)).await;
    let history = page.select_texts("#history li").join("\n");
    assert!(
        history.contains("Build “Audit rig” created by Demo editor."),
        "{history}"
    );
    let demo = app.get("/builds/tool-room-heater", Some(&session)).await;
    let history = demo.select_texts("#history li").join("\n");
    assert!(
        history.contains("Revision r4 created by") && history.contains(", copied from r3."),
        "{history}"
    );
    assert!(history.contains(" finished by "), "{history}");
    // A logbook, not a log: no raw load or outcome codes.
    assert!(!history.contains('_'), "{history}");
    // A second connection to the same file, as a tool that opened the database would.
    let url = format!("sqlite://{}", app.data_dir().join("eddybench.db").display());
    let pool = sqlx::SqlitePool::connect(&url).await.unwrap();
    let update = sqlx::query("UPDATE audit_events SET actor_name = 'someone else'")
        .execute(&pool)
        .await;
    let delete = sqlx::query("DELETE FROM audit_events").execute(&pool).await;
    assert!(
        update.is_err() && delete.is_err(),
        "the trail is append-only"
    );
    let viewer = app.signed_in("vic", UserRole::Viewer).await;
    let seen = app.get("/builds/audit-rig", Some(&viewer)).await;
    assert_eq!(seen.count("#history li"), 1, "viewers read the history too");
}

#[tokio::test]
async fn the_demo_story_reads_in_order() {
    let (app, _session) = demo_app().await;
    let build = app.store.build_by_slug("tool-room-heater").await.unwrap();
    let revisions = app.store.revisions_of_build(build.id).await.unwrap();
    let runs = app.store.runs_of_build(build.id, 100).await.unwrap();
    for revision in &revisions {
        let first_run = runs
            .iter()
            .filter(|r| r.revision_id == revision.id)
            .map(|r| r.started_at)
            .min()
            .unwrap();
        assert!(
            revision.created_at < first_run,
            "{} is dated before its first run",
            revision.label()
        );
    }
    assert!(
        revisions
            .windows(2)
            .all(|w| w[0].created_at < w[1].created_at)
    );
}
