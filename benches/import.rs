//! Streams a generated CSV of 1,000,000 readings through the real router into a temporary
//! database and prints the rate and the process's peak resident memory. The body is generated
//! chunk by chunk as the server reads it, so the peak is the server's, not the file's.
//!
//! `cargo bench --bench import` (set `IMPORT_ROWS` for another size).

use std::sync::Arc;
use std::time::Instant;

use axum::body::{Body, Bytes};
use axum::http::{Request, StatusCode, header};
use futures_util::stream::{self, StreamExt};
use http_body_util::BodyExt;
use tower::ServiceExt;

use eddybench::config::Config;
use eddybench::parts::{Parts, TankCapacitor, WorkCoil};
use eddybench::store::{NewBuild, NewRun, Store, UserRole};
use eddybench::{AppState, app};

const ROWS_PER_CHUNK: usize = 1_000;

/// Ten channels in turn, each a plausible value: a logger sampling a bench run.
fn line(i: usize) -> String {
    let t_s = (i / 10) as f64 * 0.5;
    match i % 10 {
        0 => format!("{t_s},supply_voltage,{:.2}\n", 24.0 + (i % 7) as f64 * 0.01),
        1 => format!(
            "{t_s},supply_current,{:.3}\n",
            8.0 + (i % 11) as f64 * 0.001
        ),
        2 => format!("{t_s},frequency,{:.0}\n", 152_000.0 - (i % 13) as f64),
        3 => format!("{t_s},ambient_temp,{:.1}\n", 21.0 + (i % 3) as f64 * 0.1),
        n => format!(
            "{t_s},temp.tank_capacitor.{},{:.2}\n",
            n - 3,
            25.0 + (i as f64 / 1e5)
        ),
    }
}

/// Peak resident set size of this process, in KiB.
fn peak_rss_kib() -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|status| {
            status
                .lines()
                .find_map(|l| l.strip_prefix("VmHWM:"))
                .and_then(|v| v.trim().trim_end_matches("kB").trim().parse().ok())
        })
        .unwrap_or(0)
}

#[tokio::main]
async fn main() {
    let rows: usize = std::env::var("IMPORT_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1_000_000);
    let dir = tempfile::tempdir().unwrap();
    let store = Store::open(dir.path()).await.unwrap();
    let user = store
        .create_user("bench", "Bench", UserRole::Editor, "unused")
        .await
        .unwrap();
    let token = store.create_token(user, "bench").await.unwrap().token;
    let build = store
        .create_build(&NewBuild {
            name: "Import bench",
            purpose: "",
            notes: "",
            created_by: None,
        })
        .await
        .unwrap();
    let parts = Parts {
        tank_capacitor: Some(TankCapacitor {
            label: None,
            capacitance_f: 330e-9,
            count: 6,
            dissipation_factor: None,
            esr_ohm: None,
            voltage_rating_vrms: None,
            current_rating_arms: None,
            max_temp_c: Some(85.0),
            self_heating_limit_k: None,
        }),
        work_coil: Some(WorkCoil::default()),
        ..Parts::default()
    };
    let revision = store
        .create_revision(build.id, None, &parts, "", None)
        .await
        .unwrap();
    let run = store
        .create_run(&NewRun {
            build_id: build.id,
            revision_id: revision.id,
            operator: "bench",
            created_by: None,
            started_at: None,
            supply_setting_v: Some(24.0),
            supply_current_limit_a: None,
            load: "ferrous",
            water_mass_kg: None,
            vessel_heat_capacity_j_per_k: None,
            notes: "",
            channels: &[],
        })
        .await
        .unwrap();
    let router = app(AppState {
        store: store.clone(),
        config: Arc::new(Config::new(dir.path().to_path_buf())),
        run_feeds: Default::default(),
    });

    let sent = Arc::new(std::sync::atomic::AtomicU64::new(0));
    let counter = sent.clone();
    let chunks = (0..rows.div_ceil(ROWS_PER_CHUNK)).map(move |c| {
        let mut text = String::new();
        if c == 0 {
            text.push_str("t_s,channel,value\n");
        }
        for i in c * ROWS_PER_CHUNK..((c + 1) * ROWS_PER_CHUNK).min(rows) {
            text.push_str(&line(i));
        }
        counter.fetch_add(text.len() as u64, std::sync::atomic::Ordering::Relaxed);
        Ok::<_, std::io::Error>(Bytes::from(text))
    });
    let body = Body::from_stream(stream::iter(chunks).boxed());
    let request = Request::post(format!("/api/v1/runs/{run}/readings"))
        .header(header::HOST, "bench.test")
        .header(header::AUTHORIZATION, format!("Bearer {token}"))
        .header(header::CONTENT_TYPE, "text/csv")
        .body(body)
        .unwrap();

    let before_kib = peak_rss_kib();
    let started = Instant::now();
    let response = router.oneshot(request).await.unwrap();
    let status = response.status();
    let answer = response.into_body().collect().await.unwrap().to_bytes();
    let elapsed = started.elapsed().as_secs_f64();
    assert_eq!(
        status,
        StatusCode::CREATED,
        "{}",
        String::from_utf8_lossy(&answer)
    );
    let stored = store.count_rows("readings").await.unwrap();
    assert_eq!(stored as usize, rows);

    let mib = sent.load(std::sync::atomic::Ordering::Relaxed) as f64 / (1024.0 * 1024.0);
    println!("import: {rows} rows, {mib:.1} MiB of CSV, streamed in one transaction");
    println!(
        "import: {elapsed:.2} s, {:.0} rows/s, {:.1} MiB/s",
        rows as f64 / elapsed,
        mib / elapsed
    );
    println!(
        "import: peak RSS {:.1} MiB (VmHWM; {:.1} MiB before the import)",
        peak_rss_kib() as f64 / 1024.0,
        before_kib as f64 / 1024.0
    );
}
