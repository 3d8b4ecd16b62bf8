//! The load harness: starts the release server on loopback, seeds a 1,000-run build through the
//! API, and prints each figure beside its same-run reference (the same bytes from `/static`, the
//! sqlite3 shell on the same disk), the server's memory high-water, and SIGKILL crash trials.
//!
//! Run with `cargo bench --bench load` (needs `wrk` and `sqlite3` on the PATH). Set
//! `LOAD_RUNS` (default 1000) or `LOAD_TRIALS` (default 40) for a shorter run.

#[path = "../tests/crash_trial/mod.rs"]
mod crash_trial;

use std::io::Write;
use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

use axum::body::Bytes;
use crash_trial::{CrashSetup, Server};
use http_body_util::{BodyExt, Full};
use hyper_util::client::legacy::Client;
use hyper_util::client::legacy::connect::HttpConnector;
use hyper_util::rt::TokioExecutor;
use serde_json::json;

use eddybench::secrets::{hash_password, random_token, token_hash};
use eddybench::store::{Store, UserRole};

type HttpClient = Client<HttpConnector, Full<Bytes>>;

/// wrk's settings of the table: two threads, 64 connections.
const WRK_THREADS: &str = "-t2";
const WRK_CONNECTIONS: &str = "-c64";
const WRK_SECONDS: &str = "-d8s";

fn env_number(name: &str, default: usize) -> usize {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

struct Wrk {
    requests_per_s: f64,
    p99_ms: f64,
    non_2xx: u64,
}

/// Runs wrk against `url` (with an optional Lua script) and reads its summary.
fn wrk(url: &str, headers: &[String], script: Option<&Path>) -> Wrk {
    let mut command = Command::new("wrk");
    command.args([WRK_THREADS, WRK_CONNECTIONS, WRK_SECONDS, "--latency"]);
    for header in headers {
        command.args(["-H", header]);
    }
    if let Some(script) = script {
        command.arg("-s").arg(script);
    }
    let output = command.arg(url).output().expect("wrk runs");
    let text = String::from_utf8_lossy(&output.stdout);
    let field = |prefix: &str| {
        text.lines()
            .find_map(|l| l.trim().strip_prefix(prefix).map(|v| v.trim().to_string()))
    };
    let requests_per_s = field("Requests/sec:")
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("no Requests/sec in wrk's output:\n{text}"));
    let p99_ms = field("99%").map_or(f64::NAN, |v| duration_ms(&v));
    let non_2xx = field("Non-2xx or 3xx responses:")
        .and_then(|v| v.parse().ok())
        .unwrap_or(0);
    Wrk {
        requests_per_s,
        p99_ms,
        non_2xx,
    }
}

/// wrk's durations: `850.00us`, `12.34ms`, `1.45s`.
fn duration_ms(text: &str) -> f64 {
    let number = |suffix: &str| {
        text.strip_suffix(suffix)
            .and_then(|v| v.parse::<f64>().ok())
    };
    number("us")
        .map(|v| v / 1000.0)
        .or_else(|| number("ms"))
        .or_else(|| number("s").map(|v| v * 1000.0))
        .unwrap_or(f64::NAN)
}

async fn send(
    client: &HttpClient,
    method: &str,
    url: &str,
    headers: &[(&str, String)],
    body: Vec<u8>,
) -> (u16, Bytes) {
    let mut request = axum::http::Request::builder().method(method).uri(url);
    for (name, value) in headers {
        request = request.header(*name, value);
    }
    let response = client
        .request(request.body(Full::new(Bytes::from(body))).unwrap())
        .await
        .expect("the server answers");
    let status = response.status().as_u16();
    (
        status,
        response.into_body().collect().await.unwrap().to_bytes(),
    )
}

/// One run's CSV: 5 channels every 6 s over 20 minutes (1,000 readings).
fn run_csv(seed: usize) -> String {
    let mut csv = String::from("t_s,channel,value\n");
    for k in 0..200 {
        let t = k as f64 * 6.0;
        let rise = 1.0 - (-t / 300.0).exp();
        let wobble = ((seed * 31 + k * 7) % 13) as f64 * 0.02;
        csv.push_str(&format!("{t},supply_voltage,{}\n", 24.0 - wobble));
        csv.push_str(&format!("{t},supply_current,{}\n", 8.0 + wobble));
        csv.push_str(&format!("{t},frequency,{}\n", 110_000.0 + 10.0 * wobble));
        csv.push_str(&format!("{t},temp.tank_capacitor,{}\n", 22.0 + 30.0 * rise));
        csv.push_str(&format!("{t},ambient_temp,22\n"));
    }
    csv
}

/// A build of `runs` finished runs of 1,000 readings, made through the API.
async fn seed_build(
    client: &HttpClient,
    base: &str,
    auth: &[(&str, String)],
    name: &str,
    runs: usize,
) -> String {
    let json_headers = |extra: &str| {
        let mut h = auth.to_vec();
        h.push(("content-type", extra.to_string()));
        h
    };
    let (status, body) = send(
        client,
        "POST",
        &format!("{base}/api/v1/builds"),
        &json_headers("application/json"),
        json!({"name": name}).to_string().into_bytes(),
    )
    .await;
    assert_eq!(status, 201, "{}", String::from_utf8_lossy(&body));
    let slug = serde_json::from_slice::<serde_json::Value>(&body).unwrap()["slug"]
        .as_str()
        .unwrap()
        .to_string();
    let revision = json!({"parts": {
        "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
        "work_coil": {"inductance_h": 1.2e-6},
        "choke": {"inductance_h": 1e-4, "count": 2, "dcr_ohm": 0.02},
        "switch": {"vds_max_v": 100.0, "rds_on_ohm": 0.008}
    }});
    let (status, _) = send(
        client,
        "POST",
        &format!("{base}/api/v1/builds/{slug}/revisions"),
        &json_headers("application/json"),
        revision.to_string().into_bytes(),
    )
    .await;
    assert_eq!(status, 201);
    for i in 0..runs {
        let run = json!({"revision": "r1", "supply_voltage_v": 24.0,
                         "load": if i % 2 == 0 { "none" } else { "ferrous" }});
        let (status, body) = send(
            client,
            "POST",
            &format!("{base}/api/v1/builds/{slug}/runs"),
            &json_headers("application/json"),
            run.to_string().into_bytes(),
        )
        .await;
        assert_eq!(status, 201, "{}", String::from_utf8_lossy(&body));
        let id = serde_json::from_slice::<serde_json::Value>(&body).unwrap()["id"]
            .as_i64()
            .unwrap();
        let (status, body) = send(
            client,
            "POST",
            &format!("{base}/api/v1/runs/{id}/readings"),
            &json_headers("text/csv"),
            run_csv(i).into_bytes(),
        )
        .await;
        assert_eq!(status, 201, "{}", String::from_utf8_lossy(&body));
        let (status, body) = send(
            client,
            "POST",
            &format!("{base}/api/v1/runs/{id}/finish"),
            &json_headers("application/json"),
            json!({"outcome": "completed"}).to_string().into_bytes(),
        )
        .await;
        assert_eq!(status, 200, "{}", String::from_utf8_lossy(&body));
    }
    slug
}

/// Median time of `n` sequential GETs, in milliseconds.
async fn median_get_ms(
    client: &HttpClient,
    url: &str,
    headers: &[(&str, String)],
    n: usize,
) -> (f64, usize) {
    let mut times = Vec::new();
    let mut size = 0;
    for _ in 0..n {
        let started = Instant::now();
        let (status, body) = send(client, "GET", url, headers, Vec::new()).await;
        assert_eq!(status, 200);
        times.push(started.elapsed().as_secs_f64() * 1000.0);
        size = body.len();
    }
    times.sort_by(f64::total_cmp);
    (times[n / 2], size)
}

/// The server's memory high-water (VmHWM), in MiB.
fn high_water_mib(pid: u32) -> f64 {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).unwrap_or_default();
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<f64>().ok())
        .map_or(f64::NAN, |kib| kib / 1024.0)
}

/// One-row transactions per second of the sqlite3 shell, `synchronous=FULL`, WAL, on `dir`'s disk.
fn sqlite3_one_row_transactions_per_s(dir: &Path, rows: usize) -> f64 {
    let file = dir.join("reference.db");
    let mut script = String::from(
        "PRAGMA journal_mode=WAL;\nPRAGMA synchronous=FULL;\n\
         CREATE TABLE readings (t_s REAL, channel TEXT, value REAL);\n",
    );
    for i in 0..rows {
        script.push_str(&format!(
            "INSERT INTO readings VALUES ({i}, 'ambient_temp', 21.5);\n"
        ));
    }
    let started = Instant::now();
    run_sqlite3(&file, &script);
    rows as f64 / started.elapsed().as_secs_f64()
}

fn run_sqlite3(file: &Path, script: &str) {
    let mut child = Command::new("sqlite3")
        .arg(file)
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::null())
        .spawn()
        .expect("sqlite3 runs");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(script.as_bytes())
        .unwrap();
    assert!(child.wait().unwrap().success());
}

/// A CSV of `rows` readings, as one upload.
fn big_csv(rows: usize) -> String {
    let mut csv = String::with_capacity(rows * 28);
    csv.push_str("t_s,channel,value\n");
    for i in 0..rows {
        csv.push_str(&format!(
            "{},ambient_temp,{}\n",
            i as f64 * 0.1,
            20.0 + (i % 50) as f64 * 0.1
        ));
    }
    csv
}

#[tokio::main]
async fn main() {
    let runs = env_number("LOAD_RUNS", 1000);
    let trials = env_number("LOAD_TRIALS", 40);
    let binary = std::path::PathBuf::from(env!("CARGO_BIN_EXE_eddybench"));
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("data");

    // An editor with a token (API) and a session (pages), made in the store before the server.
    let (token, session) = {
        let store = Store::open(&data).await.unwrap();
        let user = store
            .create_user(
                "bench",
                "Bench",
                UserRole::Editor,
                &hash_password("bench password"),
            )
            .await
            .unwrap();
        let session = random_token();
        store
            .create_session(&token_hash(&session), user, &random_token())
            .await
            .unwrap();
        (
            store.create_token(user, "load").await.unwrap().token,
            session,
        )
    };
    let server = Server::start(&binary, &data);
    let base = format!("http://{}", server.address);
    let client: HttpClient = Client::builder(TokioExecutor::new()).build_http();
    let auth = [("authorization", format!("Bearer {token}"))];
    let cookie = [("cookie", format!("eb_session={session}"))];
    let pid = server.pid();

    println!(
        "Eddybench load harness (release server on {base}; wrk {WRK_THREADS} {WRK_CONNECTIONS} {WRK_SECONDS})"
    );
    let started = Instant::now();
    let small = seed_build(&client, &base, &auth, "Small bench", 10).await;
    let large = seed_build(&client, &base, &auth, "Large bench", runs).await;
    println!(
        "seeded {runs} runs x 1,000 readings through the API in {:.0} s",
        started.elapsed().as_secs_f64()
    );

    // Build page against the same bytes from /static.
    let page_url = format!("{base}/builds/{large}");
    let (_, page_bytes) = median_get_ms(&client, &page_url, &cookie, 3).await;
    let (_, body) = send(&client, "GET", &page_url, &cookie, Vec::new()).await;
    let static_file = Path::new(env!("CARGO_MANIFEST_DIR")).join("static/load-reference.html");
    std::fs::write(&static_file, &body).unwrap();
    let cookie_header = vec![format!("Cookie: eb_session={session}")];
    let page = wrk(&page_url, &cookie_header, None);
    let reference = wrk(&format!("{base}/static/load-reference.html"), &[], None);
    let _ = std::fs::remove_file(&static_file);
    println!(
        "build page, {runs} runs: {:.0} vs {:.0} req/s from /static ({:.3}x), p99 {:.1} ms, {} KB{}",
        page.requests_per_s,
        reference.requests_per_s,
        page.requests_per_s / reference.requests_per_s,
        page.p99_ms,
        page_bytes / 1000,
        errors(page.non_2xx)
    );

    // Warm build page time, 10 -> many runs.
    let (small_ms, _) = median_get_ms(&client, &format!("{base}/builds/{small}"), &cookie, 9).await;
    let (large_ms, _) = median_get_ms(&client, &page_url, &cookie, 9).await;
    println!(
        "warm build page: {small_ms:.1} ms at 10 runs, {large_ms:.1} ms at {runs} runs (x{:.1})",
        large_ms / small_ms
    );

    // 64 clients, one reading per request, against the sqlite3 shell's one-row transactions.
    let run_id = open_run(&client, &base, &auth, &small).await;
    let script = dir.path().join("post.lua");
    std::fs::write(
        &script,
        "wrk.method = \"POST\"\nwrk.body = '[{\"t_s\": 1, \"channel\": \"ambient_temp\", \"value\": 21.5}]'\n\
         wrk.headers[\"Content-Type\"] = \"application/json\"\n",
    )
    .unwrap();
    let writes = wrk(
        &format!("{base}/api/v1/runs/{run_id}/readings"),
        &[format!("Authorization: Bearer {token}")],
        Some(&script),
    );
    let shell = sqlite3_one_row_transactions_per_s(dir.path(), 3000);
    println!(
        "64 clients posting one reading each: {:.0} acked/s, p99 {:.1} ms; sqlite3 shell {:.0} one-row transactions/s ({:.2}x){}",
        writes.requests_per_s,
        writes.p99_ms,
        shell,
        writes.requests_per_s / shell,
        errors(writes.non_2xx)
    );

    // A 1,000,000-row CSV through the API against `sqlite3 .import` of the same file.
    let rows = 1_000_000;
    let csv = big_csv(rows);
    let csv_file = dir.path().join("big.csv");
    std::fs::write(&csv_file, &csv).unwrap();
    let import_run = open_run(&client, &base, &auth, &small).await;
    let started = Instant::now();
    let (status, body) = send(
        &client,
        "POST",
        &format!("{base}/api/v1/runs/{import_run}/readings"),
        &[auth[0].clone(), ("content-type", "text/csv".to_string())],
        csv.into_bytes(),
    )
    .await;
    assert_eq!(status, 201, "{}", String::from_utf8_lossy(&body));
    let ours = rows as f64 / started.elapsed().as_secs_f64();
    let started = Instant::now();
    run_sqlite3(
        &dir.path().join("import.db"),
        &format!(
            "PRAGMA journal_mode=WAL;\nPRAGMA synchronous=FULL;\n.import --csv {} readings\n",
            csv_file.display()
        ),
    );
    let shell_import = rows as f64 / started.elapsed().as_secs_f64();
    println!(
        "1,000,000-row CSV: {:.0}k rows/s through the API vs {:.0}k rows/s sqlite3 .import ({:.2}x)",
        ours / 1000.0,
        shell_import / 1000.0,
        ours / shell_import
    );

    // A run page of 1,000 readings, plain and gzipped, and what each gzip level costs.
    let (run_page_url, plain) = run_page(&client, &base, &cookie, &small).await;
    let mut gz_headers = cookie.to_vec();
    gz_headers.push(("accept-encoding", "gzip".to_string()));
    let (_, gz) = send(&client, "GET", &run_page_url, &gz_headers, Vec::new()).await;
    println!(
        "run page of 1,000 readings: {} KB plain, {} KB gzipped when asked",
        plain.len() / 1000,
        gz.len() / 1000
    );
    for level in [1, 6, 9] {
        let (bytes, us) = gzip_cost(&plain, level);
        println!("  gzip level {level}: {} KB in {us:.0} us", bytes / 1000);
    }

    println!(
        "server memory high-water: {:.0} MiB (VmHWM)",
        high_water_mib(pid)
    );
    server.kill();

    // Crash trials on a fresh data directory.
    let crash_dir = dir.path().join("crash");
    let setup = CrashSetup::new(binary, crash_dir).await;
    let (mut acknowledged, mut lost, mut unsound) = (0, 0, 0);
    for trial in 0..trials as u32 {
        let kill_after = Duration::from_millis(150 + u64::from(trial * 97 % 700));
        let outcome = setup.trial(trial, 32, kill_after).await;
        acknowledged += outcome.acknowledged;
        lost += outcome.missing;
        unsound += usize::from(!outcome.problems.is_empty());
    }
    println!(
        "crash trials: {trials} SIGKILLs during 32 concurrent writers; {acknowledged} readings acknowledged, {lost} lost, {unsound} trials with integrity or foreign-key problems"
    );
}

fn errors(non_2xx: u64) -> String {
    if non_2xx == 0 {
        String::new()
    } else {
        format!(" ({non_2xx} answers not 2xx)")
    }
}

async fn open_run(client: &HttpClient, base: &str, auth: &[(&str, String)], slug: &str) -> i64 {
    let mut headers = auth.to_vec();
    headers.push(("content-type", "application/json".to_string()));
    let (status, body) = send(
        client,
        "POST",
        &format!("{base}/api/v1/builds/{slug}/runs"),
        &headers,
        json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "none"})
            .to_string()
            .into_bytes(),
    )
    .await;
    assert_eq!(status, 201);
    serde_json::from_slice::<serde_json::Value>(&body).unwrap()["id"]
        .as_i64()
        .unwrap()
}

/// The page of the small build's first run (1,000 readings).
async fn run_page(
    client: &HttpClient,
    base: &str,
    cookie: &[(&str, String)],
    slug: &str,
) -> (String, Bytes) {
    // Runs are numbered in the order made: the small build's first run is run 1.
    let url = format!("{base}/builds/{slug}/runs/1");
    let (status, body) = send(client, "GET", &url, cookie, Vec::new()).await;
    assert_eq!(status, 200, "{}", String::from_utf8_lossy(&body));
    (url, body)
}

/// Bytes and microseconds (median of 5) of gzip at `level` on `bytes`.
fn gzip_cost(bytes: &[u8], level: u32) -> (usize, f64) {
    let mut times = Vec::new();
    let mut size = 0;
    for _ in 0..5 {
        let started = Instant::now();
        let mut encoder =
            flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::new(level));
        encoder.write_all(bytes).unwrap();
        size = encoder.finish().unwrap().len();
        times.push(started.elapsed().as_secs_f64() * 1e6);
    }
    times.sort_by(f64::total_cmp);
    (size, times[2])
}
