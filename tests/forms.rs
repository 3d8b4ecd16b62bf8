//! Every form: good input saved, bad input shown again with the field marked and nothing saved.

mod common;

use axum::http::StatusCode;
use common::{Session, TestApp};
use eddybench::store::UserRole;

async fn app_with_build() -> (TestApp, Session) {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let made = app
        .post_form(
            "/builds",
            &session,
            &[("name", "Bench heater"), ("purpose", "brazing")],
        )
        .await;
    assert_eq!(made.location(), "/builds/bench-heater");
    (app, session)
}

const GOOD_REVISION: &[(&str, &str)] = &[
    ("tank_capacitor.present", "on"),
    (
        "tank_capacitor.label",
        "polypropylene film, 330 nF, 630 V DC",
    ),
    ("tank_capacitor.capacitance_f", "0.33u"),
    ("tank_capacitor.count", "6"),
    ("tank_capacitor.dissipation_factor", "0.0005"),
    ("tank_capacitor.max_temp_c", "85 °C"),
    ("work_coil.present", "on"),
    ("work_coil.inductance_h", "1.2 µH"),
    ("work_coil.turns", "6"),
    ("work_coil.conductor_kind", "tube"),
    ("work_coil.conductor_outer_diameter_m", "6 mm"),
    ("work_coil.conductor_wall_m", "0.8 mm"),
    ("choke.present", "on"),
    ("choke.inductance_h", "47u"),
    ("choke.count", "2"),
    ("choke.dcr_ohm", "15 mohm"),
    ("switch.present", "on"),
    ("switch.rds_on_ohm", "8 mΩ"),
    ("switch.vds_max_v", "100 V"),
    ("gate_resistor.present", "on"),
    ("gate_resistor.resistance_ohm", "470"),
    ("gate_clamp.present", "on"),
    ("gate_clamp.zener_voltage_v", "12 V"),
    ("notes", "first bank"),
];

#[tokio::test]
async fn a_new_build_needs_a_name() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    for name in ["", "   ", &"x".repeat(500)] {
        let page = app
            .post_form("/builds", &session, &[("name", name), ("purpose", "kept")])
            .await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY);
        assert_eq!(
            page.attr("input[name=name]", "aria-invalid").as_deref(),
            Some("true")
        );
        assert_eq!(page.count("p.error#name-error"), 1);
        assert_eq!(
            page.select_texts("textarea[name=purpose]"),
            vec!["kept"],
            "typed text comes back"
        );
    }
    assert_eq!(app.count_rows("builds").await, 0);
}

#[tokio::test]
async fn a_revision_accepts_prefixes_and_units_and_shows_engineering_notation() {
    let (app, session) = app_with_build().await;
    let page = app
        .post_form("/builds/bench-heater/revisions", &session, GOOD_REVISION)
        .await;
    assert_eq!(page.status, StatusCode::SEE_OTHER, "{}", page.body);
    assert_eq!(page.location(), "/builds/bench-heater/revisions/r1");
    let shown = app
        .get("/builds/bench-heater/revisions/r1", Some(&session))
        .await;
    let values = shown.select_texts("#parts dd");
    for expected in [
        "330 nF", "1.2 µH", "47 µH", "15 mΩ", "8 mΩ", "100 V", "470 Ω", "12 V", "85 °C",
    ] {
        assert!(
            values.iter().any(|v| v == expected),
            "{expected} missing from {values:?}"
        );
    }
    assert!(
        shown
            .select_texts("#parts h3")
            .contains(&"Tank capacitor × 6".to_string())
    );
}

#[tokio::test]
async fn a_new_revision_starts_from_a_copy_of_the_latest_and_records_its_parent() {
    let (app, session) = app_with_build().await;
    app.post_form("/builds/bench-heater/revisions", &session, GOOD_REVISION)
        .await;
    let form = app
        .get("/builds/bench-heater/revisions/new", Some(&session))
        .await;
    assert_eq!(
        form.attr("input[name=from]", "value").as_deref(),
        Some("r1")
    );
    assert_eq!(
        form.attr("input[name='tank_capacitor.capacitance_f']", "value")
            .as_deref(),
        Some("330 nF")
    );
    assert_eq!(
        form.attr("input[name='choke.dcr_ohm']", "value").as_deref(),
        Some("15 mΩ")
    );
    let mut edited: Vec<(&str, &str)> = GOOD_REVISION
        .iter()
        .map(|&(k, v)| {
            if k == "tank_capacitor.count" {
                (k, "8")
            } else {
                (k, v)
            }
        })
        .collect();
    edited.push(("from", "r1"));
    let saved = app
        .post_form("/builds/bench-heater/revisions", &session, &edited)
        .await;
    assert_eq!(saved.location(), "/builds/bench-heater/revisions/r2");
    let r2 = app
        .get("/builds/bench-heater/revisions/r2", Some(&session))
        .await;
    assert!(
        r2.select_texts("#parts h3")
            .contains(&"Tank capacitor × 8".to_string())
    );
    assert!(
        r2.select_texts("p.muted a").contains(&"r1".to_string()),
        "r2 names its parent"
    );
    let r1 = app
        .get("/builds/bench-heater/revisions/r1", Some(&session))
        .await;
    assert!(
        r1.select_texts("#parts h3")
            .contains(&"Tank capacitor × 6".to_string()),
        "r1 is immutable"
    );
}

#[tokio::test]
async fn a_revision_with_a_bad_value_comes_back_marked_and_saves_nothing() {
    let (app, session) = app_with_build().await;
    let cases: &[(&str, &str)] = &[
        ("tank_capacitor.capacitance_f", "lots"),
        ("tank_capacitor.capacitance_f", "470 nH"),
        ("tank_capacitor.capacitance_f", "-1u"),
        ("tank_capacitor.capacitance_f", "0"),
        ("tank_capacitor.capacitance_f", "NaN"),
        ("tank_capacitor.capacitance_f", ""),
        ("tank_capacitor.count", "2.5"),
        ("tank_capacitor.count", "0"),
        ("choke.inductance_h", "1e999"),
        ("switch.rds_on_ohm", "8 mA"),
        ("work_coil.conductor_wall_m", "thin"),
    ];
    for &(field, bad) in cases {
        let fields: Vec<(&str, &str)> = GOOD_REVISION
            .iter()
            .map(|&(k, v)| if k == field { (k, bad) } else { (k, v) })
            .collect();
        let page = app
            .post_form("/builds/bench-heater/revisions", &session, &fields)
            .await;
        assert_eq!(
            page.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{field} = {bad:?}"
        );
        let selector = format!("input[name='{field}']");
        assert_eq!(
            page.attr(&selector, "aria-invalid").as_deref(),
            Some("true"),
            "{field} = {bad:?} is marked"
        );
        assert!(
            page.count("p.error") >= 1,
            "{field} = {bad:?} has a message"
        );
        assert_eq!(
            page.attr(&selector, "value").as_deref(),
            Some(bad),
            "the typed value comes back"
        );
    }
    assert_eq!(app.count_rows("revisions").await, 0);
    assert_eq!(app.count_rows("parts").await, 0);
}

async fn app_with_revision() -> (TestApp, Session) {
    let (app, session) = app_with_build().await;
    app.post_form("/builds/bench-heater/revisions", &session, GOOD_REVISION)
        .await;
    (app, session)
}

#[tokio::test]
async fn a_run_starts_and_takes_readings_with_units() {
    let (app, session) = app_with_revision().await;
    let form = app
        .get("/builds/bench-heater/runs/new", Some(&session))
        .await;
    assert_eq!(form.status, StatusCode::OK);
    assert!(
        form.count("input[name=channel][value='temp.tank_capacitor.6']") == 1,
        "each of six units is a channel"
    );
    let started = app
        .post_form(
            "/builds/bench-heater/runs",
            &session,
            &[
                ("revision", "r1"),
                ("supply_setting_v", "24"),
                ("load", "none"),
                ("channel", "supply_current"),
                ("channel", "frequency"),
                ("channel", "temp.tank_capacitor"),
            ],
        )
        .await;
    assert_eq!(started.status, StatusCode::SEE_OTHER, "{}", started.body);
    let run_path = started.location();
    let run_id: i64 = run_path.rsplit('/').next().unwrap().parse().unwrap();
    app.store
        .backdate_run_start(eddybench::store::RunId(run_id), 120)
        .await
        .unwrap();
    let page = app.get(&run_path, Some(&session)).await;
    assert_eq!(
        page.count("form#entry-set input[name^='value.']"),
        3,
        "one field per channel in use, in one form"
    );
    // Values written on paper, each with its time: one set per time.
    for (channel, value, time) in [
        ("frequency", "152", "0:30"), // a bare number in the frequency field is kHz
        ("supply_current", "500 mA", "45 s"),
    ] {
        let name = format!("value.{channel}");
        let added = app
            .post_form(
                &format!("{run_path}/readings"),
                &session,
                &[(name.as_str(), value), ("time", time)],
            )
            .await;
        assert_eq!(added.status, StatusCode::SEE_OTHER, "{}", added.body);
        assert!(
            added.location().contains("logged=1"),
            "{}",
            added.location()
        );
    }
    let added = app
        .post_form(
            &format!("{run_path}/readings"),
            &session,
            &[("value.temp.tank_capacitor", "41.5")],
        )
        .await;
    assert_eq!(added.status, StatusCode::SEE_OTHER);
    let page = app.get(&run_path, Some(&session)).await;
    let cells = page.select_texts("table.readings td");
    let values = page.select_texts("table.readings span.value");
    assert_eq!(values, vec!["41.5 °C", "500 mA", "152 kHz"], "newest first");
    assert!(
        cells.contains(&"0:30".to_string()) && cells.contains(&"0:45".to_string()),
        "{cells:?}"
    );
    assert_eq!(app.count_rows("readings").await, 3);
}

#[tokio::test]
async fn a_run_form_with_bad_values_saves_nothing() {
    let (app, session) = app_with_revision().await;
    for (field, bad) in [
        ("supply_setting_v", "twelve"),
        ("supply_setting_v", "-12"),
        ("load", "plasma"),
        ("water_mass_kg", ""),
    ] {
        let mut fields = vec![
            ("revision", "r1"),
            ("supply_setting_v", "24"),
            ("load", "water"),
            ("water_mass_kg", "0.5"),
            ("channel", "water_temp"),
        ];
        for f in fields.iter_mut() {
            if f.0 == field {
                f.1 = bad;
            }
        }
        let page = app
            .post_form("/builds/bench-heater/runs", &session, &fields)
            .await;
        assert_eq!(
            page.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{field}={bad:?}"
        );
        assert!(page.count("p.error") >= 1);
    }
    let no_channel = app
        .post_form(
            "/builds/bench-heater/runs",
            &session,
            &[("revision", "r1"), ("load", "none")],
        )
        .await;
    assert_eq!(no_channel.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(app.count_rows("runs").await, 0);
}

/// Starts an idle run on r1 that logs the tank capacitor, and returns its page's path.
async fn start_tank_run(app: &TestApp, session: &Session) -> String {
    let started = app
        .post_form(
            "/builds/bench-heater/runs",
            session,
            &[
                ("revision", "r1"),
                ("load", "none"),
                ("channel", "temp.tank_capacitor"),
            ],
        )
        .await;
    assert_eq!(started.status, StatusCode::SEE_OTHER, "{}", started.body);
    started.location()
}

#[tokio::test]
async fn a_bad_reading_is_refused_with_a_message_and_not_saved() {
    let (app, session) = app_with_revision().await;
    let run_path = start_tank_run(&app, &session).await;
    for (channel, value, time) in [
        ("temp.tank_capacitor", "hot", ""),
        ("temp.tank_capacitor", "41 V", ""),
        ("temp.tank_capacitor", "4100", ""),
        ("temp.tank_capacitor", "", ""),
        ("temp.tank_capacitor", "41", "yesterday"),
        ("temp.tank_capacitor", "41", "99:00"),
        ("temp.nothing", "41", ""),
    ] {
        let name = format!("value.{channel}");
        let page = app
            .post_form(
                &format!("{run_path}/readings"),
                &session,
                &[(name.as_str(), value), ("time", time)],
            )
            .await;
        assert_eq!(
            page.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{value:?} at {time:?} should be refused"
        );
        assert!(
            page.count("#entry-set p.error, #set-error") >= 1,
            "{value:?} {time:?}"
        );
        if channel == "temp.tank_capacitor" && !value.is_empty() {
            assert_eq!(
                page.attr("input[name='value.temp.tank_capacitor']", "value")
                    .as_deref(),
                Some(value),
                "what was typed is kept"
            );
        }
    }
    assert_eq!(app.count_rows("readings").await, 0);
}

#[tokio::test]
async fn finishing_a_run_records_the_failed_part_and_closes_entry() {
    let (app, session) = app_with_revision().await;
    let run_path = start_tank_run(&app, &session).await;
    let missing_part = app
        .post_form(
            &format!("{run_path}/finish"),
            &session,
            &[("outcome", "part_failed")],
        )
        .await;
    assert!(missing_part.location().contains("error="));
    let done = app
        .post_form(
            &format!("{run_path}/finish"),
            &session,
            &[
                ("outcome", "part_failed"),
                ("failed_part", "tank_capacitor.3"),
                ("note", "unit 3 bulged"),
            ],
        )
        .await;
    assert_eq!(done.status, StatusCode::SEE_OTHER);
    let page = app.get(&run_path, Some(&session)).await;
    let banner = page.select_texts("#outcome").join(" ");
    assert!(
        banner.contains("Part failed")
            && banner.contains("Tank capacitor 3")
            && banner.contains("unit 3 bulged"),
        "{banner}"
    );
    assert_eq!(
        page.count("form#entry-set"),
        0,
        "a finished run takes no more readings"
    );
    let late = app
        .post_form(
            &format!("{run_path}/readings"),
            &session,
            &[("value.temp.tank_capacitor", "50")],
        )
        .await;
    assert_eq!(late.status, StatusCode::CONFLICT);
}
