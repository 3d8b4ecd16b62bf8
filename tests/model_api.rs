//! The model three ways (endpoint, command line, revision panel) gives the same numbers, and a bad
//! body gets a clear 422 and nothing else happens.

mod common;

use std::io::Write;
use std::process::{Command, Stdio};

use axum::http::StatusCode;
use common::TestApp;
use eddybench::store::UserRole;

/// Worked example of the driver (derived): Vin 24 V, L 1 µH, C 1 µF, Iin 10 A.
const REFERENCE_BODY: &str = r#"{
  "parts": {
    "tank_capacitor": {"capacitance_f": 1e-7, "count": 10, "dissipation_factor": 5e-4},
    "work_coil": {"inductance_h": 1e-6}
  },
  "operating_point": {"supply_voltage_v": 24, "supply_current_a": 10}
}"#;

fn close(actual: &serde_json::Value, expected: f64, relative: f64) -> bool {
    let actual = actual.as_f64().unwrap_or(f64::NAN);
    (actual - expected).abs() <= relative * expected.abs()
}

#[tokio::test]
async fn the_endpoint_answers_the_reference_example_without_a_login() {
    let app = TestApp::new().await;
    let page = app.post_json("/api/v1/model", None, REFERENCE_BODY).await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    let json = page.json();
    // Textbook resonance; derived driver waveforms; textbook Q·tanδ.
    assert!(close(&json["resonant_frequency_hz"], 159_154.9, 1e-6));
    assert!(close(&json["tank_peak_voltage_v"], 75.398, 1e-4));
    assert!(close(&json["tank_rms_voltage_v"], 53.315, 1e-4));
    assert!(close(&json["tank_rms_current_a"], 53.315, 1e-4));
    assert!(close(&json["reactive_power_var"], 2842.4, 1e-4));
    assert!(close(&json["capacitor_loss_w"], 1.421, 1e-3));
    assert!(close(
        &json["capacitor_rms_current_per_unit_a"],
        5.331,
        1e-3
    ));
    assert!(close(&json["input_power_w"], 240.0, 1e-9));
    assert!(close(&json["loaded_q"], 11.844, 1e-4));
    assert!(
        json["frequency_with_chokes_hz"].is_null(),
        "no choke given: absent, not guessed"
    );
    assert!(json["flags"].is_array());
    assert!(json["caveats"][0].as_str().unwrap().contains("proximity"));
}

#[tokio::test]
async fn bad_bodies_get_a_422_naming_the_field_and_nothing_is_stored() {
    let app = TestApp::new().await;
    let cases = [
        ("{", "body"),
        ("[]", "body"),
        (r#"{"parts": {}, "operating_point": {}}"#, "operating_point"),
        (
            r#"{"parts": {"tank_capacitor": {"capacitance_f": -1e-7, "count": 1}}, "operating_point": {"supply_voltage_v": 24}}"#,
            "parts.tank_capacitor.capacitance_f",
        ),
        (
            r#"{"parts": {"tank_capacitor": {"capacitance_f": 0, "count": 1}}, "operating_point": {"supply_voltage_v": 24}}"#,
            "parts.tank_capacitor.capacitance_f",
        ),
        (
            r#"{"parts": {"work_coil": {"inductance_h": 0}}, "operating_point": {"supply_voltage_v": 24}}"#,
            "parts.work_coil.inductance_h",
        ),
        (
            r#"{"parts": {"work_coil": {"inductance_h": 5}}, "operating_point": {"supply_voltage_v": 24}}"#,
            "parts.work_coil.inductance_h",
        ),
        // Out of f64's range: the JSON reader refuses it as a malformed number, with its position.
        (
            r#"{"parts": {}, "operating_point": {"supply_voltage_v": 1e400}}"#,
            "body",
        ),
        (
            r#"{"parts": {}, "operating_point": {"supply_voltage_v": "NaN"}}"#,
            "operating_point.supply_voltage_v",
        ),
        (
            r#"{"parts": {}, "operating_point": {"supply_voltage_v": 24, "frequency_hz": -5}}"#,
            "operating_point.frequency_hz",
        ),
        (
            r#"{"parts": {"flux_capacitor": {}}, "operating_point": {"supply_voltage_v": 24}}"#,
            "parts",
        ),
    ];
    for (body, field) in cases {
        let page = app.post_json("/api/v1/model", None, body).await;
        assert_eq!(
            page.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body} → {}",
            page.body
        );
        let json = page.json();
        assert!(
            json["error"].as_str().is_some_and(|e| !e.is_empty()),
            "{body}: a message"
        );
        let named = json["field"].as_str().unwrap_or("");
        assert!(
            named.starts_with(field),
            "{body}: field {named:?} should start with {field:?}"
        );
    }
    let wrong_type = app
        .send(
            axum::http::Request::post("/api/v1/model")
                .header("host", common::HOST)
                .header("content-type", "text/plain")
                .body(axum::body::Body::from(REFERENCE_BODY))
                .unwrap(),
        )
        .await;
    assert_eq!(wrong_type.status, StatusCode::BAD_REQUEST);
    assert!(wrong_type.json()["error"].is_string());
    for table in ["builds", "revisions", "runs", "readings"] {
        assert_eq!(app.count_rows(table).await, 0);
    }
}

#[tokio::test]
async fn the_command_line_prints_the_same_json_as_the_endpoint() {
    let app = TestApp::new().await;
    let endpoint = app
        .post_json("/api/v1/model", None, REFERENCE_BODY)
        .await
        .json();
    let mut child = Command::new(env!("CARGO_BIN_EXE_eddybench"))
        .args(["model", "-"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(REFERENCE_BODY.as_bytes())
        .unwrap();
    let output = child.wait_with_output().unwrap();
    assert!(output.status.success());
    let printed: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(printed, endpoint);

    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("request.json");
    std::fs::write(&file, REFERENCE_BODY).unwrap();
    let table = Command::new(env!("CARGO_BIN_EXE_eddybench"))
        .args(["model", "--table"])
        .arg(&file)
        .output()
        .unwrap();
    let text = String::from_utf8(table.stdout).unwrap();
    assert!(
        text.lines()
            .any(|l| l.starts_with("Tank peak voltage") && l.ends_with("75.4 V")),
        "{text}"
    );
    assert!(
        text.lines()
            .any(|l| l.starts_with("Resonant frequency") && l.ends_with("159.2 kHz")),
        "{text}"
    );
    assert!(text.contains("proximity"));

    std::fs::write(
        &file,
        r#"{"parts": {}, "operating_point": {"supply_voltage_v": -3}}"#,
    )
    .unwrap();
    let refused = Command::new(env!("CARGO_BIN_EXE_eddybench"))
        .args(["model"])
        .arg(&file)
        .output()
        .unwrap();
    assert!(!refused.status.success());
    assert!(String::from_utf8_lossy(&refused.stderr).contains("operating_point.supply_voltage_v"));
}

#[tokio::test]
async fn the_revision_panel_shows_the_same_numbers_and_takes_a_what_if() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    app.post_form("/builds", &session, &[("name", "Rig")]).await;
    let saved = app
        .post_form(
            "/builds/rig/revisions",
            &session,
            &[
                ("tank_capacitor.present", "on"),
                ("tank_capacitor.capacitance_f", "100n"),
                ("tank_capacitor.count", "10"),
                ("tank_capacitor.dissipation_factor", "0.0005"),
                ("work_coil.present", "on"),
                ("work_coil.inductance_h", "1u"),
                ("supply.present", "on"),
                ("supply.nominal_voltage_v", "12 V"),
            ],
        )
        .await;
    assert_eq!(saved.status, StatusCode::SEE_OTHER, "{}", saved.body);
    let value = |page: &common::Page, name: &str| {
        page.select_texts(&format!("#model-values [data-quantity={name}] dd"))
            .join("")
    };
    let nominal = app.get("/builds/rig/revisions/r1", Some(&session)).await;
    assert_eq!(
        value(&nominal, "tank_peak_voltage_v"),
        "37.7 V",
        "π × 12 V at the nominal supply"
    );
    assert!(
        nominal
            .select_texts("#model h2")
            .join(" ")
            .contains("nominal supply")
    );
    let what_if = app
        .get(
            "/builds/rig/revisions/r1?supply_voltage_v=24+V&supply_current_a=10",
            Some(&session),
        )
        .await;
    // The same numbers as the endpoint, formatted (the worked example).
    assert_eq!(value(&what_if, "tank_peak_voltage_v"), "75.4 V");
    assert_eq!(value(&what_if, "resonant_frequency_hz"), "159.2 kHz");
    assert_eq!(value(&what_if, "input_power_w"), "240 W");
    // The what-if stays open with what was typed, and says which values the answer is for.
    assert_eq!(what_if.count("#model details.what-if[open]"), 1);
    assert_eq!(
        what_if
            .attr("input[name=supply_voltage_v]", "value")
            .as_deref(),
        Some("24 V")
    );
    assert!(
        what_if.select_texts("#what-if-echo")[0]
            .starts_with("What if: Supply voltage 24 V · Supply current 10."),
        "{:?}",
        what_if.select_texts("#what-if-echo")
    );
    assert_eq!(nominal.count("#what-if-echo"), 0);
    assert!(
        what_if
            .select_texts("#model .caveats li")
            .iter()
            .any(|c| c.contains("proximity"))
    );
    let bad = app
        .get(
            "/builds/rig/revisions/r1?supply_voltage_v=lots",
            Some(&session),
        )
        .await;
    assert_eq!(bad.status, StatusCode::OK);
    assert_eq!(
        bad.attr("input[name=supply_voltage_v]", "aria-invalid")
            .as_deref(),
        Some("true")
    );
    assert_eq!(
        bad.count("#model-values"),
        0,
        "no numbers for a bad operating point"
    );
    assert_eq!(
        app.count_rows("revisions").await,
        1,
        "the panel saves nothing"
    );
}
