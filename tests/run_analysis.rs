//! Each run's analysis through the API and on the run page: thermal fit and time to limit,
//! calorimetric efficiency, run flags and the live margins of an open run.

mod common;

use axum::http::StatusCode;
use common::{Session, TestApp};
use eddybench::parts::{Parts, Supply, TankCapacitor, WorkCoil};
use eddybench::store::{
    NewBuild, NewReading, NewRun, Outcome, RunFinish, RunId, UserRole, now_unix_s,
};

fn parts() -> Parts {
    Parts {
        tank_capacitor: Some(TankCapacitor {
            label: Some("polypropylene film, 100 nF".into()),
            capacitance_f: 100e-9,
            count: 10,
            dissipation_factor: Some(5e-4),
            esr_ohm: None,
            voltage_rating_vrms: None,
            current_rating_arms: None,
            max_temp_c: Some(65.0),
            self_heating_limit_k: Some(60.0),
        }),
        work_coil: Some(WorkCoil {
            inductance_h: Some(1e-6),
            ..WorkCoil::default()
        }),
        supply: Some(Supply {
            label: None,
            nominal_voltage_v: Some(24.0),
            current_limit_a: Some(20.0),
        }),
        ..Parts::default()
    }
}

struct Fixture {
    app: TestApp,
    session: Session,
}

impl Fixture {
    async fn new() -> Fixture {
        let app = TestApp::new().await;
        let session = app.signed_in("ada", UserRole::Editor).await;
        Fixture { app, session }
    }

    async fn run(
        &self,
        load: &str,
        water_kg: Option<f64>,
        readings: Vec<NewReading>,
        finished: bool,
        started_at: Option<i64>,
    ) -> RunId {
        let store = &self.app.store;
        let build = match store.build_by_slug("rig").await {
            Ok(build) => build,
            Err(_) => store
                .create_build(&NewBuild {
                    name: "Rig",
                    purpose: "",
                    notes: "",
                    created_by: None,
                })
                .await
                .unwrap(),
        };
        let revision = match store.latest_revision(build.id).await.unwrap() {
            Some(r) => r,
            None => store
                .create_revision(build.id, None, &parts(), "", None)
                .await
                .unwrap(),
        };
        let id = store
            .create_run(&NewRun {
                build_id: build.id,
                revision_id: revision.id,
                operator: "Ada",
                created_by: None,
                started_at,
                supply_setting_v: Some(24.0),
                supply_current_limit_a: Some(20.0),
                load,
                water_mass_kg: water_kg,
                vessel_heat_capacity_j_per_k: water_kg.map(|_| 0.0),
                notes: "",
                channels: &[],
            })
            .await
            .unwrap();
        store.add_readings(id, &readings, None).await.unwrap();
        if finished {
            store
                .finish_run(
                    id,
                    &RunFinish {
                        by: None,
                        outcome: Outcome::Completed,
                        failed_part: None,
                        note: "",
                        finished_at: None,
                    },
                )
                .await
                .unwrap();
        }
        id
    }
}

fn reading(t_s: f64, channel: &str, value: f64) -> NewReading {
    NewReading {
        t_s,
        channel: channel.into(),
        value,
        client_id: None,
    }
}

/// Lumped capacitance (Incropera & DeWitt, published): T_a 25 °C, ΔT_ss 50 K, τ 300 s.
fn reference_temperature(t_s: f64) -> f64 {
    25.0 + 50.0 * (1.0 - (-t_s / 300.0).exp())
}

fn electrical(t_s: f64, current_a: f64) -> Vec<NewReading> {
    vec![
        reading(t_s, "supply_voltage", 24.0),
        reading(t_s, "supply_current", current_a),
        reading(t_s, "frequency", 159_155.0),
    ]
}

#[tokio::test]
async fn the_fit_recovers_the_reference_curve_and_its_time_to_limit() {
    let f = Fixture::new().await;
    let mut readings = Vec::new();
    for k in 0..=40 {
        let t = f64::from(k) * 15.0;
        readings.extend(electrical(t, 10.0));
        readings.push(reading(t, "temp.tank_capacitor", reference_temperature(t)));
        readings.push(reading(t, "ambient_temp", 25.0));
    }
    let id = f.run("ferrous", None, readings, true, None).await;
    let page = f
        .app
        .get(&format!("/api/v1/runs/{id}/analysis"), Some(&f.session))
        .await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    let json = page.json();
    let thermal = &json["thermal"][0];
    assert_eq!(thermal["channel"], "temp.tank_capacitor");
    let fit = &thermal["fit"];
    assert!(
        (fit["tau_s"].as_f64().unwrap() - 300.0).abs() < 0.3,
        "{fit}"
    );
    assert!(
        (fit["t_final_c"].as_f64().unwrap() - 75.0).abs() < 0.05,
        "{fit}"
    );
    assert_eq!(fit["trustworthy"], true);
    // Lumped model: 65 °C is reached at 482.83 s.
    assert!(
        (thermal["time_to_limit_s"].as_f64().unwrap() - 482.83).abs() < 0.5,
        "{thermal}"
    );
    assert!((thermal["limit_c"].as_f64().unwrap() - 65.0).abs() < 1e-9);
    assert!((thermal["predicted_margin_k"].as_f64().unwrap() - (65.0 - 75.0)).abs() < 0.1);
    assert!(
        json["flags"]
            .as_array()
            .unwrap()
            .iter()
            .any(|f| f["code"] == "cap-overtemp" && f["severity"] == "failure")
    );
    assert!(
        (json["operating_point"]["supply_current_a"]
            .as_f64()
            .unwrap()
            - 10.0)
            .abs()
            < 1e-9
    );

    let run_page = f
        .app
        .get(&format!("/builds/rig/runs/{id}"), Some(&f.session))
        .await;
    let reached = run_page.select_texts("[data-channel='temp.tank_capacitor'] .time-to-limit");
    assert_eq!(reached, vec!["8:03"], "482.8 s on the page");
    assert_eq!(
        run_page.count("svg[role=img] g.threshold"),
        1,
        "the limit drawn on the chart"
    );
    assert_eq!(
        run_page.count("svg[role=img] g.x-marker"),
        1,
        "the predicted crossing marked"
    );
    assert!(
        run_page.count("figure.chart details.chart-numbers table") >= 1,
        "the numbers behind the chart"
    );
}

#[tokio::test]
async fn a_water_run_gives_the_calorimetric_efficiency_of_the_reference_example() {
    let f = Fixture::new().await;
    // IAPWS-95 c_p (published): 1.000 kg from 20.0 to 30.0 °C in 120.0 s → 348.4 W;
    // from 24 V × 20 A, 72.6 %.
    let mut readings = Vec::new();
    for k in 0..=12 {
        let t = f64::from(k) * 10.0;
        readings.extend(electrical(t, 20.0));
        readings.push(reading(t, "water_temp", 20.0 + 10.0 * t / 120.0));
    }
    let id = f.run("water", Some(1.0), readings, true, None).await;
    let json = f
        .app
        .get(&format!("/api/v1/runs/{id}/analysis"), Some(&f.session))
        .await
        .json();
    let efficiency = json["efficiency"]["calorimetric"].as_f64().unwrap();
    assert!((efficiency - 0.726).abs() < 5e-4, "{efficiency}");
    assert!(
        json["efficiency"]["model"].is_number(),
        "the loss budget is always a method"
    );
    let page = f
        .app
        .get(&format!("/builds/rig/runs/{id}"), Some(&f.session))
        .await;
    assert_eq!(
        page.select_texts("#efficiency [data-method=Calorimetric] dd"),
        vec!["72.6 %"]
    );
}

#[tokio::test]
async fn a_current_at_its_limit_and_no_frequency_raise_run_flags() {
    let f = Fixture::new().await;
    let mut readings = Vec::new();
    for k in 0..=10 {
        let t = f64::from(k) * 10.0;
        readings.push(reading(t, "supply_voltage", 24.0));
        readings.push(reading(t, "supply_current", 19.9));
    }
    let id = f.run("ferrous", None, readings, true, None).await;
    let json = f
        .app
        .get(&format!("/api/v1/runs/{id}/analysis"), Some(&f.session))
        .await
        .json();
    let codes: Vec<&str> = json["flags"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["code"].as_str().unwrap())
        .collect();
    assert!(codes.contains(&"supply-limit"), "{codes:?}");
    assert!(codes.contains(&"no-oscillation"), "{codes:?}");
    let page = f
        .app
        .get(&format!("/builds/rig/runs/{id}"), Some(&f.session))
        .await;
    assert_eq!(page.count("#flags .flag[data-code=supply-limit]"), 1);
}

#[tokio::test]
async fn an_open_run_shows_each_part_margin_and_its_countdown() {
    let f = Fixture::new().await;
    // The run started 240 s ago; readings follow the reference curve up to now.
    let started = now_unix_s() - 240;
    let mut readings = Vec::new();
    for k in 0..=16 {
        let t = f64::from(k) * 15.0;
        readings.extend(electrical(t, 10.0));
        readings.push(reading(t, "temp.tank_capacitor", reference_temperature(t)));
    }
    let id = f.run("ferrous", None, readings, false, Some(started)).await;
    let page = f
        .app
        .get(&format!("/builds/rig/runs/{id}"), Some(&f.session))
        .await;
    let live = page.select_texts("#live li").join(" ");
    assert!(live.contains("Tank capacitor"), "{live}");
    // 65 − T(240 s) = 65 − 52.53 = 12.5 K; the limit in 482.8 − 240 ≈ 243 s = about 4:03.
    assert!(live.contains("12.5 K"), "{live}");
    assert!(live.contains("limit in about 4:0"), "{live}");
}

#[tokio::test]
async fn the_analysis_needs_a_sign_in_and_an_existing_run() {
    let f = Fixture::new().await;
    let anonymous = f.app.get("/api/v1/runs/1/analysis", None).await;
    assert_eq!(anonymous.status, StatusCode::UNAUTHORIZED);
    assert!(anonymous.json()["error"].is_string());
    let missing = f
        .app
        .get("/api/v1/runs/999/analysis", Some(&f.session))
        .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
}
