//! Crash trials: the real server binary is killed with SIGKILL while clients post readings, and
//! the database is then checked: every reading the server acknowledged is there, and SQLite's
//! integrity and foreign-key checks are clean. Shared by `tests/crash.rs` (a few trials) and
//! `benches/load.rs` (forty and more).
#![allow(dead_code)]

use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

use axum::body::Bytes;
use http_body_util::{BodyExt, Full};
use hyper_util::client::legacy::Client;
use hyper_util::client::legacy::connect::HttpConnector;
use hyper_util::rt::TokioExecutor;
use serde_json::{Value, json};

use eddybench::store::{RunId, Store, UserRole};

type HttpClient = Client<HttpConnector, Full<Bytes>>;

/// A data directory with an editor's token and an open run, made through the real server.
pub struct CrashSetup {
    pub binary: PathBuf,
    pub data_dir: PathBuf,
    pub token: String,
    pub run_id: i64,
}

/// What one trial saw.
#[derive(Debug)]
pub struct TrialOutcome {
    /// Readings the server answered 201 for before it was killed.
    pub acknowledged: usize,
    /// Acknowledged readings not found after the restart (must be 0).
    pub missing: usize,
    /// Lines of `integrity_check` / `foreign_key_check` (must be empty).
    pub problems: Vec<String>,
}

/// The running server: its process and address.
pub struct Server {
    child: Child,
    pub address: String,
}

impl Server {
    pub fn start(binary: &Path, data_dir: &Path) -> Server {
        let mut child = Command::new(binary)
            .args(["serve", "--listen", "127.0.0.1:0", "--data-dir"])
            .arg(data_dir)
            .env("RUST_LOG", "error")
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .expect("the server binary starts");
        let stdout = child.stdout.take().expect("stdout is piped");
        let mut line = String::new();
        BufReader::new(stdout)
            .read_line(&mut line)
            .expect("the server prints its address");
        let address = line
            .trim()
            .rsplit("http://")
            .next()
            .expect("an address")
            .trim_end_matches('/')
            .to_string();
        assert!(!address.is_empty(), "no address in {line:?}");
        Server { child, address }
    }

    pub fn pid(&self) -> u32 {
        self.child.id()
    }

    /// SIGKILL: no clean stop, no flush, as at a power cut of the process.
    pub fn kill(mut self) {
        self.child.kill().expect("the server can be killed");
        let _ = self.child.wait();
    }
}

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn client() -> HttpClient {
    Client::builder(TokioExecutor::new()).build_http()
}

async fn post(client: &HttpClient, address: &str, token: &str, path: &str, body: Value) -> u16 {
    post_status_body(client, address, token, path, body).await.0
}

async fn post_status_body(
    client: &HttpClient,
    address: &str,
    token: &str,
    path: &str,
    body: Value,
) -> (u16, Value) {
    let request = axum::http::Request::post(format!("http://{address}{path}"))
        .header("authorization", format!("Bearer {token}"))
        .header("content-type", "application/json")
        .body(Full::new(Bytes::from(body.to_string())))
        .expect("a valid request");
    match client.request(request).await {
        Ok(response) => {
            let status = response.status().as_u16();
            let bytes = response
                .into_body()
                .collect()
                .await
                .map(|b| b.to_bytes())
                .unwrap_or_default();
            (
                status,
                serde_json::from_slice(&bytes).unwrap_or(Value::Null),
            )
        }
        Err(_) => (0, Value::Null),
    }
}

impl CrashSetup {
    /// An editor and a token made in the store, then a build, revision and open run through
    /// the server's API.
    pub async fn new(binary: PathBuf, data_dir: PathBuf) -> CrashSetup {
        let token = {
            let store = Store::open(&data_dir).await.expect("the store opens");
            let hash = eddybench::secrets::hash_password("crash-trial password");
            let user = store
                .create_user("bench", "Bench", UserRole::Editor, &hash)
                .await
                .expect("a user");
            store
                .create_token(user, "crash")
                .await
                .expect("a token")
                .token
        };
        let server = Server::start(&binary, &data_dir);
        let client = client();
        let address = server.address.clone();
        let build = json!({"name": "Crash heater", "purpose": "durability"});
        assert_eq!(
            post(&client, &address, &token, "/api/v1/builds", build).await,
            201
        );
        let revision = json!({"parts": {
            "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
            "work_coil": {"inductance_h": 1.2e-6},
            "switch": {"vds_max_v": 100.0, "rds_on_ohm": 0.008}
        }});
        let path = "/api/v1/builds/crash-heater/revisions";
        assert_eq!(post(&client, &address, &token, path, revision).await, 201);
        let run = json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "none"});
        let path = "/api/v1/builds/crash-heater/runs";
        let (status, body) = post_status_body(&client, &address, &token, path, run).await;
        assert_eq!(status, 201, "{body}");
        let run_id = body["id"].as_i64().expect("a run id");
        server.kill();
        CrashSetup {
            binary,
            data_dir,
            token,
            run_id,
        }
    }

    /// Starts the server, lets `writers` clients post one reading per request, kills the
    /// server after `kill_after`, and checks the database. Times are unique per trial and
    /// writer, so every acknowledged reading can be looked for.
    pub async fn trial(&self, trial: u32, writers: usize, kill_after: Duration) -> TrialOutcome {
        let server = Server::start(&self.binary, &self.data_dir);
        let stop = Arc::new(AtomicBool::new(false));
        let mut tasks = Vec::new();
        for writer in 0..writers {
            let (client, address, token, stop) = (
                client(),
                server.address.clone(),
                self.token.clone(),
                stop.clone(),
            );
            let path = format!("/api/v1/runs/{}/readings", self.run_id);
            tasks.push(tokio::spawn(async move {
                let mut acknowledged = Vec::new();
                for i in 0..19_999 {
                    if stop.load(Ordering::Relaxed) {
                        break;
                    }
                    // Within a run's week: 10,000 s a trial, 200 s a writer, 10 ms a reading.
                    let t_s = f64::from(trial) * 1e4 + writer as f64 * 200.0 + f64::from(i) * 0.01;
                    let body = json!([{"t_s": t_s, "channel": "ambient_temp", "value": 21.5}]);
                    match post(&client, &address, &token, &path, body).await {
                        201 => acknowledged.push(t_s),
                        // The server is gone: nothing more will be acknowledged.
                        0 => break,
                        status => panic!("a reading was refused with {status}"),
                    }
                }
                acknowledged
            }));
        }
        tokio::time::sleep(kill_after).await;
        server.kill();
        stop.store(true, Ordering::Relaxed);
        let mut acknowledged = Vec::new();
        for task in tasks {
            acknowledged.extend(task.await.expect("a writer finishes"));
        }
        let store = Store::open(&self.data_dir)
            .await
            .expect("the store reopens");
        let stored: std::collections::HashSet<u64> = store
            .current_readings(RunId(self.run_id))
            .await
            .expect("readings")
            .iter()
            .map(|r| r.t_s.to_bits())
            .collect();
        let missing = acknowledged
            .iter()
            .filter(|t| !stored.contains(&t.to_bits()))
            .count();
        let problems = store.integrity_problems().await.expect("the checks run");
        TrialOutcome {
            acknowledged: acknowledged.len(),
            missing,
            problems,
        }
    }
}
