//! The build page's time at 10, 100 and 1,000 runs of one build (about 1,000 readings each at
//! the largest size, a million readings in all). Reports the first view, which makes the run
//! digests, and the median of later views, which read only the kept digests.
//!
//! Run with `cargo bench --bench build_page`.

use std::sync::Arc;
use std::time::Instant;

use axum::body::Body;
use axum::http::Request;
use http_body_util::BodyExt;
use tower::ServiceExt;

use eddybench::config::Config;
use eddybench::parts::{Choke, Parts, Supply, TankCapacitor, WorkCoil};
use eddybench::secrets::{random_token, token_hash};
use eddybench::store::{NewBuild, NewReading, NewRun, Outcome, RunFinish, Store, UserRole};
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
        choke: Some(Choke {
            label: None,
            inductance_h: 100e-6,
            count: 2,
            dcr_ohm: Some(0.02),
            saturation_current_a: Some(20.0),
            max_temp_c: Some(120.0),
        }),
        supply: Some(Supply {
            label: None,
            nominal_voltage_v: Some(24.0),
            current_limit_a: Some(30.0),
        }),
        ..Parts::default()
    }
}

/// One run: 5 channels every 6 s over 20 minutes (1,000 readings).
fn readings(seed: usize) -> Vec<NewReading> {
    let mut out = Vec::with_capacity(1000);
    for k in 0..200 {
        let t = k as f64 * 6.0;
        let rise = 1.0 - (-t / 300.0).exp();
        let wobble = ((seed * 31 + k * 7) % 13) as f64 * 0.02;
        out.push(NewReading {
            t_s: t,
            channel: "supply_voltage".into(),
            value: 24.0 - wobble,
            client_id: None,
        });
        out.push(NewReading {
            t_s: t,
            channel: "supply_current".into(),
            value: 8.0 + wobble,
            client_id: None,
        });
        out.push(NewReading {
            t_s: t,
            channel: "frequency".into(),
            value: 110_000.0 + 10.0 * wobble,
            client_id: None,
        });
        out.push(NewReading {
            t_s: t,
            channel: "temp.tank_capacitor".into(),
            value: 22.0 + 30.0 * rise + wobble,
            client_id: None,
        });
        out.push(NewReading {
            t_s: t,
            channel: "ambient_temp".into(),
            value: 22.0,
            client_id: None,
        });
    }
    out
}

async fn seeded(runs: usize) -> (tempfile::TempDir, Store) {
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
    for i in 0..runs {
        let id = store
            .create_run(&NewRun {
                build_id: build.id,
                revision_id: revision.id,
                operator: "bench",
                created_by: None,
                started_at: Some(1_700_000_000 + i as i64 * 3600),
                supply_setting_v: Some(24.0),
                supply_current_limit_a: Some(30.0),
                load: if i % 2 == 0 { "none" } else { "ferrous" },
                water_mass_kg: None,
                vessel_heat_capacity_j_per_k: None,
                notes: "",
                channels: &[],
            })
            .await
            .unwrap();
        store.add_readings(id, &readings(i), None).await.unwrap();
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
    (dir, store)
}

async fn view(router: &axum::Router, cookie: &str) -> f64 {
    let start = Instant::now();
    let response = router
        .clone()
        .oneshot(
            Request::get("/builds/bench")
                .header("host", "bench")
                .header("cookie", cookie)
                .body(Body::empty())
                .unwrap(),
        )
        .await
        .unwrap();
    assert!(response.status().is_success(), "{}", response.status());
    response.into_body().collect().await.unwrap();
    start.elapsed().as_secs_f64() * 1000.0
}

#[tokio::main]
async fn main() {
    println!("build page, one build, 1,000 readings per run");
    println!(
        "{:>6} {:>14} {:>16}",
        "runs", "first view ms", "warm median ms"
    );
    for runs in [10, 100, 1000] {
        let (dir, store) = seeded(runs).await;
        let user = store
            .create_user("bench", "Bench", UserRole::Viewer, "unused")
            .await
            .unwrap();
        let session = random_token();
        store
            .create_session(&token_hash(&session), user, &random_token())
            .await
            .unwrap();
        let cookie = format!("eb_session={session}");
        let router = app(AppState {
            store,
            config: Arc::new(Config::new(dir.path().to_path_buf())),
            run_feeds: Default::default(),
        });
        let first = view(&router, &cookie).await;
        let mut warm = Vec::new();
        for _ in 0..9 {
            warm.push(view(&router, &cookie).await);
        }
        warm.sort_by(f64::total_cmp);
        println!("{runs:>6} {first:>14.1} {:>16.1}", warm[warm.len() / 2]);
    }
}
