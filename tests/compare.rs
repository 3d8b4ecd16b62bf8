//! Comparing revisions and the build report: the parts diff on fixtures, the compare page's
//! rows and marks on the demo build, refusals of bad choices, the report's contents, and who
//! may read them.

mod common;

use axum::http::StatusCode;
use common::{Session, TestApp, capacitor, choke};
use eddybench::parts::{GateClamp, OtherPart, Parts, Role, Switch};
use eddybench::store::UserRole;
use eddybench::web::compare::parts_diff::{Change, FieldDiff, StepDiff, diff_parts};

const SLUG: &str = "tool-room-heater";

fn other(label: &str, quantity: u32) -> OtherPart {
    OtherPart {
        label: label.into(),
        quantity,
        max_temp_c: None,
    }
}

/// Four 0.22 µF units, 47 µH chokes, a switch, a fan.
fn before() -> Parts {
    Parts {
        tank_capacitor: Some(capacitor(0.22e-6, 4)),
        choke: Some(choke(47e-6)),
        switch: Some(Switch {
            vds_max_v: Some(100.0),
            ..Switch::default()
        }),
        other: vec![other("fan, 80 mm", 1)],
        ..Parts::default()
    }
}

/// Six units, 100 µH chokes, the switch gone, gate clamps and a heat sink added, the fan kept.
fn after() -> Parts {
    Parts {
        tank_capacitor: Some(capacitor(0.22e-6, 6)),
        choke: Some(choke(100e-6)),
        gate_clamp: Some(GateClamp {
            label: Some("12 V zener".into()),
            zener_voltage_v: 12.0,
        }),
        other: vec![other("fan, 80 mm", 1), other("heat sink", 2)],
        ..Parts::default()
    }
}

fn row<'a>(rows: &'a [FieldDiff], title: &str) -> &'a FieldDiff {
    rows.iter().find(|d| d.title() == title).unwrap_or_else(|| {
        let titles: Vec<String> = rows.iter().map(FieldDiff::title).collect();
        panic!("no row {title:?} in {titles:?}")
    })
}

#[test]
fn the_diff_shows_changed_fields_old_to_new_in_engineering_notation() {
    let rows = diff_parts(&before(), &after());
    let count = row(&rows, "Tank capacitor · Units in parallel");
    assert_eq!(count.change, Change::Changed);
    assert_eq!(count.values(), "4 → 6");
    let chokes = row(&rows, "Choke · Inductance");
    assert_eq!(chokes.change, Change::Changed);
    assert_eq!(chokes.values(), "47\u{a0}µH → 100\u{a0}µH");
    assert_eq!(chokes.class(), "changed");
    assert_eq!(
        row(&rows, "Tank capacitor · Capacitance of one unit").change,
        Change::Unchanged
    );
    assert_eq!(row(&rows, "Other: fan, 80 mm").change, Change::Unchanged);
}

#[test]
fn the_diff_shows_parts_added_and_removed() {
    let rows = diff_parts(&before(), &after());
    let clamp = row(&rows, "Gate clamp");
    assert_eq!(clamp.change, Change::Added);
    assert_eq!(clamp.role, Role::GateClamp);
    assert_eq!(clamp.values(), "Label 12 V zener; Zener voltage 12\u{a0}V");
    let switch = row(&rows, "Switch");
    assert_eq!(switch.change, Change::Removed);
    assert_eq!(switch.values(), "V_DS maximum 100\u{a0}V");
    assert_eq!(row(&rows, "Other: heat sink").change, Change::Added);
    // Read the other way, what was added is removed.
    let back = diff_parts(&after(), &before());
    assert_eq!(row(&back, "Gate clamp").change, Change::Removed);
    assert_eq!(row(&back, "Switch").change, Change::Added);
    assert_eq!(
        row(&back, "Choke · Inductance").values(),
        "100\u{a0}µH → 47\u{a0}µH"
    );
}

#[test]
fn a_field_given_only_later_is_added_within_its_part() {
    let mut later = before();
    later.tank_capacitor.as_mut().unwrap().current_rating_arms = Some(12.0);
    later.switch.as_mut().unwrap().vds_max_v = None;
    let step = StepDiff::new("r1", &before(), "r2", &later);
    let titles: Vec<String> = step.changes.iter().map(FieldDiff::title).collect();
    assert_eq!(
        titles,
        [
            "Tank capacitor · RMS current rating",
            "Switch · V_DS maximum"
        ]
    );
    assert_eq!(step.changes[0].change, Change::Added);
    assert_eq!(step.changes[0].values(), "— → 12\u{a0}A");
    assert_eq!(step.changes[1].change, Change::Removed);
    assert_eq!(step.changes[1].values(), "100\u{a0}V → —");
}

#[test]
fn an_unchanged_pair_of_revisions_shows_no_changes() {
    let step = StepDiff::new("r1", &after(), "r2", &after());
    assert!(step.changes.is_empty(), "{:?}", step.changes);
    assert!(!step.unchanged.is_empty());
    assert!(
        StepDiff::new("r1", &Parts::default(), "r2", &Parts::default())
            .changes
            .is_empty()
    );
}

/// The demo scenario, and the demo editor signed in.
async fn demo() -> (TestApp, Session) {
    let app = TestApp::new().await;
    let login = eddybench::demo::seed(&app.store).await.unwrap();
    let session = app
        .login(&login.editor_name, &login.editor_password)
        .await
        .expect("the demo editor signs in");
    (app, session)
}

/// The text of each revision's line of a row, by revision.
fn row_cells(page: &common::Page, section: &str, key: &str) -> Vec<(String, String, bool)> {
    let html = page.html();
    let row_selector =
        scraper::Selector::parse(&format!("{section} li.compare-row[data-row='{key}']")).unwrap();
    let cell_selector = scraper::Selector::parse("ul.per-revision > li").unwrap();
    let row = html
        .select(&row_selector)
        .next()
        .unwrap_or_else(|| panic!("no row {key} in {section}"));
    row.select(&cell_selector)
        .map(|li| {
            let text = li.text().collect::<String>();
            (
                li.value().attr("data-rev").unwrap_or_default().to_string(),
                text.split_whitespace().collect::<Vec<_>>().join(" "),
                li.value()
                    .has_class("better", scraper::CaseSensitivity::CaseSensitive),
            )
        })
        .collect()
}

#[tokio::test]
async fn the_compare_page_reads_as_rows_and_marks_the_better_revision() {
    let (app, session) = demo().await;
    let page = app
        .get(
            &format!("/builds/{SLUG}/compare?revs=r1,r2"),
            Some(&session),
        )
        .await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);

    // r1 → r2 swapped the polyester bank for more polypropylene units.
    assert_eq!(page.count("#parts-diff article.step"), 1);
    let changed = page.select_texts("#parts-diff li.diff-row.changed");
    assert!(
        changed
            .iter()
            .any(|t| t.contains("Tank capacitor · Units in parallel") && t.contains("4 → 6")),
        "{changed:?}"
    );
    assert!(
        changed.iter().all(|t| t.contains("changed")),
        "a word beside the colour"
    );
    assert!(page.count("#parts-diff details.unchanged li") > 10);

    // Every row has one line per revision, in the order chosen.
    for section in ["#model-rows", "#measured-rows"] {
        let html = page.html();
        let rows = scraper::Selector::parse(&format!("{section} > li.compare-row")).unwrap();
        let lines = scraper::Selector::parse("ul.per-revision > li").unwrap();
        let mut seen = 0;
        for row in html.select(&rows) {
            let revs: Vec<&str> = row
                .select(&lines)
                .map(|li| li.value().attr("data-rev").unwrap())
                .collect();
            assert_eq!(revs, ["r1", "r2"]);
            seen += 1;
        }
        assert!(seen >= 5, "{section} has {seen} rows");
    }

    // The polyester bank cooked on r1 and r2 runs cool, but r1's runs were idle at 17.9 V and
    // r2's idle runs at 23.9 V: not comparable, and the page says why instead of "better".
    for key in ["t-max-tank_capacitor", "margin-tank_capacitor"] {
        let cells = row_cells(&page, "#measured-rows", key);
        assert!(cells[0].1.contains("baseline"), "{key}: {cells:?}");
        assert!(!cells.iter().any(|c| c.2), "{key}: {cells:?}");
        assert!(
            cells[1].1.contains("not comparable with r1")
                && cells[1].1.contains("17.9 V against 23.9 V"),
            "{key}: {cells:?}"
        );
    }
    // Neutral rows are never marked.
    let runs = row_cells(&page, "#measured-rows", "runs");
    assert!(runs.iter().all(|(_, _, better)| !better), "{runs:?}");
    assert!(page.count("#measured-rows li[data-row^='median-efficiency-']") >= 1);

    // The model at one supply: r1 and r2 both name 24 V.
    assert!(
        page.select_texts("#model h2")[0].contains("24 V"),
        "{:?}",
        page.select_texts("#model h2")
    );
    assert_eq!(
        row_cells(&page, "#model-rows", "tank_rms_voltage_v").len(),
        2
    );
    let flags = row_cells(&page, "#model-rows", "model-flags");
    assert!(flags[0].1.contains("failure"), "{flags:?}");

    // Charts, with the numbers behind them.
    assert!(page.count("#charts svg[role=img]") >= 2);
    assert!(page.count("#charts details.chart-numbers table") >= 2);
    assert_eq!(page.count("#model .caveats li"), 3);
}

#[tokio::test]
async fn the_picker_form_and_the_comma_list_give_the_same_page() {
    let (app, session) = demo().await;
    let listed = app
        .get(
            &format!("/builds/{SLUG}/compare?revs=r4,r3"),
            Some(&session),
        )
        .await;
    let picked = app
        .get(
            &format!("/builds/{SLUG}/compare?rev=r4&rev=r3"),
            Some(&session),
        )
        .await;
    assert_eq!(picked.status, StatusCode::OK);
    assert_eq!(
        listed.select_texts("#parts-diff li.diff-row"),
        picked.select_texts("#parts-diff li.diff-row")
    );
    assert_eq!(
        picked
            .attr("#parts-diff article.step", "data-from")
            .as_deref(),
        Some("r3"),
        "older to newer, whatever the order picked"
    );
    // The oldest is the baseline until another is chosen.
    assert_eq!(
        picked.select_texts(".baseline-picker strong"),
        ["r3"],
        "{:?}",
        picked.select_texts(".baseline-picker")
    );
    let on_r4 = app
        .get(
            &format!("/builds/{SLUG}/compare?revs=r3,r4&base=r4"),
            Some(&session),
        )
        .await;
    assert_eq!(on_r4.select_texts(".baseline-picker strong"), ["r4"]);
    let cells = row_cells(&on_r4, "#measured-rows", "t-max-tank_capacitor");
    assert!(cells[1].1.contains("baseline"), "{cells:?}");
    assert!(!cells[0].1.contains("baseline"), "{cells:?}");
    // r4 runs from 36 V: the common supply is the highest nominal one.
    assert!(picked.select_texts("#model h2")[0].contains("36 V"));

    // Four at once: three steps.
    let four = app
        .get(
            &format!("/builds/{SLUG}/compare?revs=r1,r2,r3,r4"),
            Some(&session),
        )
        .await;
    assert_eq!(four.status, StatusCode::OK);
    assert_eq!(four.count("#parts-diff article.step"), 3);
}

#[tokio::test]
async fn a_typed_common_supply_is_used_and_a_bad_one_is_marked() {
    let (app, session) = demo().await;
    let page = app
        .get(
            &format!("/builds/{SLUG}/compare?revs=r1,r2&supply_voltage_v=12%20V"),
            Some(&session),
        )
        .await;
    assert_eq!(page.status, StatusCode::OK);
    assert!(page.select_texts("#model h2")[0].contains("12 V"));
    for bad in ["twelve", "-5", "0", "50%20kV", "12%20A", "NaN"] {
        let page = app
            .get(
                &format!("/builds/{SLUG}/compare?revs=r1,r2&supply_voltage_v={bad}"),
                Some(&session),
            )
            .await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{bad}");
        assert_eq!(
            page.attr("input[name=supply_voltage_v]", "aria-invalid")
                .as_deref(),
            Some("true"),
            "{bad}"
        );
        assert_eq!(page.count("p.error#supply_voltage_v-error"), 1, "{bad}");
        assert_eq!(page.count("#model-rows"), 0, "{bad}");
        assert!(
            page.count("#measured-rows li.compare-row") > 0,
            "the rest still shows"
        );
    }
}

#[tokio::test]
async fn a_bad_choice_of_revisions_is_a_clear_422_page() {
    let (app, session) = demo().await;
    let cases = [
        ("revs=r2", "only r2"),
        ("revs=", "none was chosen"),
        ("", "none was chosen"),
        ("revs=r1,r2,r3,r4,r1", "at most 4"),
        ("rev=r1&rev=r2&rev=r3&rev=r4&rev=r2", "at most 4"),
        ("revs=r2,r9", "“r9” is not a revision"),
        ("revs=r2,bogus", "“bogus” is not a revision"),
        ("revs=r0,r2", "“r0” is not a revision"),
        ("revs=r2,r2", "r2 is chosen twice"),
        ("rev=r3&revs=r3", "r3 is chosen twice"),
    ];
    for (query, says) in cases {
        let page = app
            .get(&format!("/builds/{SLUG}/compare?{query}"), Some(&session))
            .await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{query}");
        let message = page.select_texts("#choice-error");
        assert!(
            message.len() == 1 && message[0].contains(says),
            "{query}: {message:?}"
        );
        // The picker comes back to choose again.
        assert_eq!(
            page.count("form input[type=checkbox][name=rev]"),
            4,
            "{query}"
        );
    }
    let missing = app
        .get("/builds/no-such-build/compare?revs=r1,r2", Some(&session))
        .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
}

/// A build with five revisions: five distinct existing ones are still too many.
#[tokio::test]
async fn five_existing_revisions_are_too_many() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let build = app
        .store
        .create_build(&eddybench::store::NewBuild {
            name: "Five step",
            purpose: "",
            notes: "",
            created_by: None,
        })
        .await
        .unwrap();
    let mut parent = None;
    for count in 1..=5 {
        let parts = Parts {
            tank_capacitor: Some(capacitor(0.33e-6, count)),
            ..Parts::default()
        };
        let revision = app
            .store
            .create_revision(build.id, parent, &parts, "", None)
            .await
            .unwrap();
        parent = Some(revision.id);
    }
    let page = app
        .get(
            &format!("/builds/{}/compare?revs=r1,r2,r3,r4,r5", build.slug),
            Some(&session),
        )
        .await;
    assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(page.select_texts("#choice-error")[0].contains("at most 4"));
    // Without runs the page still works, and the steps read one count change each.
    let page = app
        .get(
            &format!("/builds/{}/compare?revs=r1,r2,r5", build.slug),
            Some(&session),
        )
        .await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    assert_eq!(
        page.select_texts("#parts-diff li.diff-row.changed .diff-values"),
        ["1 → 2", "2 → 5"]
    );
    assert_eq!(page.count("#charts"), 0, "no runs, no charts");
    let runs = row_cells(&page, "#measured-rows", "runs");
    assert_eq!(runs.len(), 3);

    // A sixth revision with the fifth's parts: the step between them shows no change.
    let fifth = app.store.revision_by_number(build.id, 5).await.unwrap();
    app.store
        .create_revision(build.id, Some(fifth.id), &fifth.parts, "same parts", None)
        .await
        .unwrap();
    let page = app
        .get(
            &format!("/builds/{}/compare?revs=r5,r6", build.slug),
            Some(&session),
        )
        .await;
    assert_eq!(page.status, StatusCode::OK);
    assert_eq!(
        page.select_texts("#parts-diff .no-changes"),
        ["No changes in the parts."]
    );
    assert_eq!(page.count("#parts-diff li.diff-row.changed"), 0);
    assert_eq!(page.count("#parts-diff details.unchanged li"), 2);
}

#[tokio::test]
async fn the_report_has_the_parts_the_runs_the_charts_and_the_cautions() {
    let (app, session) = demo().await;
    let page = app
        .get(&format!("/builds/{SLUG}/report"), Some(&session))
        .await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    assert!(page.select_texts("#purpose .purpose")[0].len() > 10);
    // The parts of the latest revision.
    assert!(page.select_texts("#report-parts h2")[0].contains("r4"));
    assert!(page.count("#report-parts article.part") >= 7);
    assert!(
        page.select_texts("#report-parts dd")
            .iter()
            .any(|v| v.ends_with(" nF") || v.ends_with(" µF"))
    );
    // Every run of the build, oldest first, with its tank capacitor and efficiency.
    let runs = app
        .store
        .runs_of_build(app.store.build_by_slug(SLUG).await.unwrap().id, 1000)
        .await
        .unwrap();
    assert_eq!(page.count("#runs-summary tbody tr"), runs.len());
    let revisions = page.select_texts("#runs-summary tbody td[data-label=Revision]");
    assert_eq!(revisions.first().map(String::as_str), Some("r1"));
    assert_eq!(revisions.last().map(String::as_str), Some("r4"));
    assert!(
        page.select_texts("#runs-summary td.tank-max")
            .iter()
            .any(|t| t.ends_with("°C"))
    );
    assert!(
        page.select_texts("#runs-summary td.tank-margin")
            .iter()
            .any(|t| t.ends_with(" K"))
    );
    assert!(
        page.select_texts("#runs-summary td.efficiency")
            .iter()
            .any(|t| t.contains("% (calorimetric)"))
    );
    assert!(
        page.count("#runs-summary tr.failed") >= 1,
        "r1's failed run is marked"
    );
    // The build page's health and charts.
    assert!(page.count("#health li.row.health") >= 3);
    assert!(page.count("#report-charts svg[role=img]") >= 4);
    // The model's caveats and the safety cautions.
    assert_eq!(page.count("#report-caveats li"), 3);
    let cautions = page.select_texts("#cautions li").join(" ");
    for needed in [
        "hot",
        "π × the supply",
        "rupture",
        "rings",
        "ICNIRP (2010)",
        "100 µT",
        "27 µT",
        "3 kHz and 10 MHz",
        "pacemakers",
        "isolated, certified bench supply with a fuse",
        "local electrical codes and licensed practice",
    ] {
        assert!(
            cautions.contains(needed),
            "cautions lack {needed:?}: {cautions}"
        );
    }
    // The print stylesheet is linked.
    assert_eq!(
        page.attr(
            &format!("link[href='{}']", eddybench::web::assets::url("print.css")),
            "media"
        )
        .as_deref(),
        Some("print")
    );
}

#[tokio::test]
async fn the_report_of_one_revision_shows_its_parts_and_runs_only() {
    let (app, session) = demo().await;
    let page = app
        .get(&format!("/builds/{SLUG}/report?rev=r2"), Some(&session))
        .await;
    assert_eq!(page.status, StatusCode::OK);
    assert!(page.select_texts("#report-parts h2")[0].contains("r2"));
    let revisions = page.select_texts("#runs-summary tbody td[data-label=Revision]");
    assert!(!revisions.is_empty());
    assert!(revisions.iter().all(|r| r == "r2"), "{revisions:?}");
    assert!(page.select_texts("#health h2")[0].contains("r2"));
    for bad in ["r9", "bogus"] {
        let page = app
            .get(&format!("/builds/{SLUG}/report?rev={bad}"), Some(&session))
            .await;
        assert_eq!(page.status, StatusCode::NOT_FOUND, "{bad}");
    }
    let missing = app
        .get("/builds/no-such-build/report", Some(&session))
        .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
}

#[tokio::test]
async fn a_viewer_reads_both_and_an_anonymous_visitor_is_sent_to_sign_in() {
    let (app, _) = demo().await;
    let login = eddybench::demo::seed(&app.store).await.unwrap();
    let viewer = app
        .login(&login.viewer_name, &login.viewer_password)
        .await
        .expect("the demo viewer signs in");
    for path in [
        format!("/builds/{SLUG}/compare?revs=r3,r4"),
        format!("/builds/{SLUG}/report"),
        format!("/builds/{SLUG}/report?rev=r1"),
    ] {
        let page = app.get(&path, Some(&viewer)).await;
        assert_eq!(page.status, StatusCode::OK, "{path}");
        let anonymous = app.get(&path, None).await;
        assert!(
            anonymous.status.is_redirection(),
            "{path}: {}",
            anonymous.status
        );
        assert!(anonymous.location().starts_with("/login"), "{path}");
        assert!(
            !anonymous.body.contains("tool-room"),
            "nothing of the build leaks"
        );
    }
}

#[tokio::test]
async fn a_build_without_revisions_or_runs_still_has_a_report() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    app.post_form("/builds", &session, &[("name", "Empty bench")])
        .await;
    let page = app.get("/builds/empty-bench/report", Some(&session)).await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    assert_eq!(page.count("#runs-summary"), 0);
    assert!(page.count("#cautions li") >= 7);
    let compare = app
        .get("/builds/empty-bench/compare?revs=r1,r2", Some(&session))
        .await;
    assert_eq!(compare.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(compare.select_texts("#choice-error")[0].contains("none yet"));
}
