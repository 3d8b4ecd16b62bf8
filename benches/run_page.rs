//! The open run page at 1,000, 10,000 and 100,000 readings: bytes of HTML (before
//! compression) and the time of the first view and the median of later (warm) views. The
//! page's target is under 100 KB and under 50 ms warm at 100,000 readings, whatever the run's
//! length: charts drawn from a min/max-decimated series, the table a page of 40 readings.
//!
//! Run with `cargo bench --bench run_page`.

use std::time::Instant;

use axum::body::Body;
use axum::http::Request;
use http_body_util::BodyExt;
use tower::ServiceExt;

use eddybench::config::Config;
use eddybench::parts::{Parts, Switch, TankCapacitor, WorkCoil};
use eddybench::secrets::{random_token, token_hash};
use eddybench::store::{NewBuild, NewEventMark, NewReading, NewRun, RunId, Store, UserRole};
use eddybench::{AppState, app};

fn parts() -> Parts {
    Parts {
        tank_capacitor: Some(TankCapacitor {
            label: None,
            capacitance_f: 330e-9,
            count: 6,
            dissipation_factor: Some(5e-4),
            esr_ohm: None,
            voltage_rating_vrms: Some(250.0),
            current_rating_arms: Some(12.0),
            max_temp_c: Some(85.0),
            self_heating_limit_k: None,
        }),
        work_coil: Some(WorkCoil {
            inductance_h: Some(1.2e-6),
            ..WorkCoil::default()
        }),
        switch: Some(Switch {
            vds_max_v: Some(100.0),
            rds_on_ohm: Some(0.008),
            ..Switch::default()
        }),
        ..Parts::default()
    }
}

/// `count` readings over five channels, one set a second, warming towards a steady state.
fn readings(count: usize) -> Vec<NewReading> {
    let channels = [
        "supply_voltage",
        "supply_current",
        "frequency",
        "temp.tank_capacitor",
        "temp.switch",
    ];
    (0..count)
        .map(|i| {
            let t_s = (i / channels.len()) as f64;
            let rise = 1.0 - (-t_s / 900.0).exp();
            let wobble = ((i * 7) % 13) as f64 * 0.02;
            let value = match i % channels.len() {
                0 => 24.0 - wobble,
                1 => 8.0 + wobble,
                2 => 110_000.0 + 10.0 * wobble,
                3 => 22.0 + 40.0 * rise + wobble,
                _ => 22.0 + 50.0 * rise + wobble,
            };
            NewReading {
                t_s,
                channel: channels[i % channels.len()].into(),
                value,
                client_id: None,
            }
        })
        .collect()
}

async fn seeded(count: usize) -> (tempfile::TempDir, Store, RunId) {
    let dir = tempfile::tempdir().unwrap();
    let store = Store::open(dir.path()).await.unwrap();
    let build = store
        .create_build(&NewBuild {
            name: "Bench",
            purpose: "",
            notes: "",
            created_by: None,
        })
        .await
        .unwrap();
    let revision = store
        .create_revision(build.id, None, &parts(), "", None)
        .await
        .unwrap();
    let span_s = (count / 5) as i64;
    let channels: Vec<String> = [
        "supply_voltage",
        "supply_current",
        "frequency",
        "temp.tank_capacitor",
        "temp.switch",
    ]
    .map(String::from)
    .to_vec();
    let run = store
        .create_run(&NewRun {
            build_id: build.id,
            revision_id: revision.id,
            operator: "bench",
            created_by: None,
            started_at: Some(eddybench::store::now_unix_s() - span_s - 5),
            supply_setting_v: Some(24.0),
            supply_current_limit_a: Some(30.0),
            load: "ferrous",
            water_mass_kg: None,
            vessel_heat_capacity_j_per_k: None,
            notes: "",
            channels: &channels,
        })
        .await
        .unwrap();
    store
        .add_readings(run, &readings(count), None)
        .await
        .unwrap();
    for (k, text) in ["supply on", "workpiece in", "fan on"]
        .into_iter()
        .enumerate()
    {
        let mark = NewEventMark {
            t_s: span_s as f64 * k as f64 / 3.0,
            text: text.into(),
            client_id: None,
        };
        store.add_event_mark(run, &mark, None).await.unwrap();
    }
    (dir, store, run)
}

/// One view: milliseconds and bytes of the body.
async fn view(router: &axum::Router, path: &str, cookie: &str) -> (f64, usize) {
    let start = Instant::now();
    let response = router
        .clone()
        .oneshot(
            Request::get(path)
                .header("host", "bench")
                .header("cookie", cookie)
                .body(Body::empty())
                .unwrap(),
        )
        .await
        .unwrap();
    assert!(response.status().is_success(), "{}", response.status());
    let body = response.into_body().collect().await.unwrap().to_bytes();
    (start.elapsed().as_secs_f64() * 1000.0, body.len())
}

#[tokio::main]
async fn main() {
    println!("open run page (editor), five channels, three marks");
    println!(
        "{:>9} {:>10} {:>14} {:>16}",
        "readings", "bytes", "first view ms", "warm median ms"
    );
    for count in [1_000, 10_000, 100_000] {
        let (dir, store, run) = seeded(count).await;
        let user = store
            .create_user("bench", "Bench", UserRole::Editor, "unused")
            .await
            .unwrap();
        let session = random_token();
        store
            .create_session(&token_hash(&session), user, &random_token())
            .await
            .unwrap();
        let cookie = format!("eb_session={session}");
        let router = app(AppState::new(store, Config::new(dir.path().to_path_buf())));
        let path = format!("/builds/bench/runs/{run}");
        let (first, bytes) = view(&router, &path, &cookie).await;
        let mut warm = Vec::new();
        for _ in 0..9 {
            warm.push(view(&router, &path, &cookie).await.0);
        }
        warm.sort_by(f64::total_cmp);
        println!(
            "{count:>9} {bytes:>10} {first:>14.1} {:>16.1}",
            warm[warm.len() / 2]
        );
    }
}
