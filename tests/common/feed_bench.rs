//! The world of a feeder test: the `eddybench` server as a process of its own (so it can be
//! killed and started again on the same port), an editor's token, an open run, and the feeder
//! as a process (so it can be SIGKILLed mid-feed).
#![allow(dead_code)] // each test file uses part of the kit

use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use hyper::Method;
use serde_json::{Value, json};

use eddybench::feed::server::Server;
use eddybench::secrets::hash_password;
use eddybench::store::{ReadingRow, RunId, Store, UserRole};

pub const BIN: &str = env!("CARGO_BIN_EXE_eddybench");

pub struct BenchServer {
    pub dir: tempfile::TempDir,
    pub port: u16,
    pub token: String,
    child: Option<Child>,
}

impl BenchServer {
    /// A data directory with an editor and their token, served on a free port.
    pub async fn start() -> BenchServer {
        let dir = tempfile::tempdir().unwrap();
        let store = Store::open(dir.path()).await.unwrap();
        let user = store
            .create_user(
                "bench",
                "Bench",
                UserRole::Editor,
                &hash_password("a long test password"),
            )
            .await
            .unwrap();
        let token = store.create_token(user, "feeder").await.unwrap().token;
        drop(store);
        let mut server = BenchServer {
            dir,
            port: 0,
            token,
            child: None,
        };
        server.serve();
        server
    }

    /// Starts the server process (again) and waits for its "serving at" line.
    pub fn serve(&mut self) {
        let listen = format!("127.0.0.1:{}", self.port);
        let mut child = Command::new(BIN)
            .args(["serve", "--listen", &listen, "--data-dir"])
            .arg(self.dir.path())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        let mut stdout = BufReader::new(child.stdout.take().unwrap());
        let mut line = String::new();
        stdout.read_line(&mut line).unwrap();
        let address = line
            .trim()
            .strip_prefix("Eddybench is serving at http://")
            .unwrap_or_else(|| panic!("unexpected first line {line:?}"))
            .trim_end_matches('/');
        self.port = address.rsplit_once(':').unwrap().1.parse().unwrap();
        std::thread::spawn(move || std::io::copy(&mut stdout, &mut std::io::sink()));
        self.child = Some(child);
    }

    /// SIGKILL: no clean shutdown, requests in flight are cut.
    pub fn kill(&mut self) {
        if let Some(mut child) = self.child.take() {
            child.kill().unwrap();
            child.wait().unwrap();
        }
    }

    pub fn url(&self) -> String {
        format!("http://127.0.0.1:{}", self.port)
    }

    pub fn api(&self) -> Server {
        Server::new(&self.url(), &self.token).unwrap()
    }

    pub async fn post(&self, path: &str, body: Value) -> Value {
        self.api()
            .call(Method::POST, path, Some(body.to_string().into_bytes()))
            .await
            .unwrap_or_else(|e| panic!("POST {path}: {e:?}"))
            .0
    }

    /// A build with a six-capacitor bank rated 85 °C and an open run on it; returns its id.
    pub async fn open_run(&self) -> i64 {
        self.post("/api/v1/builds", json!({"name": "Feeder heater"}))
            .await;
        self.post(
            "/api/v1/builds/feeder-heater/revisions",
            json!({"parts": {
                "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
                "work_coil": {"inductance_h": 1.2e-6},
                "switch": {"vds_max_v": 100.0, "rds_on_ohm": 0.008}
            }}),
        )
        .await;
        let run = self
            .post(
                "/api/v1/builds/feeder-heater/runs",
                json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "ferrous"}),
            )
            .await;
        run["id"].as_i64().unwrap()
    }

    pub async fn finish(&self, run: i64) {
        self.post(
            &format!("/api/v1/runs/{run}/finish"),
            json!({"outcome": "completed"}),
        )
        .await;
    }

    /// The run's current readings, read from the database file beside the server.
    pub async fn readings(&self, run: i64) -> Vec<ReadingRow> {
        let store = Store::open(self.dir.path()).await.unwrap();
        let rows = store.current_readings(RunId(run)).await.unwrap();
        drop(store);
        rows
    }

    /// Waits (up to `within`) until `done` holds for the run's readings; returns them.
    pub async fn readings_until(
        &self,
        run: i64,
        within: Duration,
        done: impl Fn(&[ReadingRow]) -> bool,
    ) -> Vec<ReadingRow> {
        let until = Instant::now() + within;
        loop {
            let rows = self.readings(run).await;
            if done(&rows) || Instant::now() > until {
                return rows;
            }
            tokio::time::sleep(Duration::from_millis(200)).await;
        }
    }
}

impl Drop for BenchServer {
    fn drop(&mut self) {
        self.kill();
    }
}

/// Values of one channel, in the order of their times.
pub fn values_of(rows: &[ReadingRow], channel: &str) -> Vec<f64> {
    let mut rows: Vec<&ReadingRow> = rows.iter().filter(|r| r.channel == channel).collect();
    rows.sort_by(|a, b| a.t_s.total_cmp(&b.t_s));
    rows.iter().map(|r| r.value).collect()
}

/// The feeder as a process, its standard error collected.
pub struct Feeder {
    child: Option<Child>,
    pub stderr: Arc<Mutex<String>>,
}

impl Feeder {
    pub fn start(server: &BenchServer, run: i64, config: &Path, queue: &Path) -> Feeder {
        let mut child = Command::new(BIN)
            .args(["feed", "--server", &server.url(), "--run", &run.to_string()])
            .arg("--config")
            .arg(config)
            .arg("--queue")
            .arg(queue)
            .env("EDDYBENCH_TOKEN", &server.token)
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        let stderr = Arc::new(Mutex::new(String::new()));
        let mut pipe = child.stderr.take().unwrap();
        let collected = stderr.clone();
        std::thread::spawn(move || {
            let mut buffer = [0u8; 4096];
            while let Ok(n) = pipe.read(&mut buffer) {
                if n == 0 {
                    break;
                }
                collected
                    .lock()
                    .unwrap()
                    .push_str(&String::from_utf8_lossy(&buffer[..n]));
            }
        });
        Feeder {
            child: Some(child),
            stderr,
        }
    }

    /// Waits for the first status lines: the sources have started (and a followed file's end
    /// was taken).
    pub fn wait_started(&self) {
        let until = Instant::now() + Duration::from_secs(20);
        while !self.stderr.lock().unwrap().contains("server http") {
            assert!(Instant::now() < until, "the feeder never started");
            std::thread::sleep(Duration::from_millis(20));
        }
    }

    pub fn sigkill(&mut self) {
        if let Some(mut child) = self.child.take() {
            child.kill().unwrap();
            child.wait().unwrap();
        }
    }

    /// Waits for the feeder to exit by itself; its success and what it printed.
    pub fn wait(&mut self, within: Duration) -> (bool, String) {
        let mut child = self.child.take().expect("the feeder runs");
        let until = Instant::now() + within;
        loop {
            if let Some(status) = child.try_wait().unwrap() {
                // Let the reader thread take the last bytes.
                std::thread::sleep(Duration::from_millis(100));
                return (status.success(), self.stderr.lock().unwrap().clone());
            }
            if Instant::now() > until {
                child.kill().unwrap();
                panic!(
                    "the feeder did not stop; it printed:\n{}",
                    self.stderr.lock().unwrap()
                );
            }
            std::thread::sleep(Duration::from_millis(50));
        }
    }
}

impl Drop for Feeder {
    fn drop(&mut self) {
        self.sigkill();
    }
}

/// Writes a config file into `dir`.
pub fn config_file(dir: &Path, text: &str) -> PathBuf {
    let path = dir.join("feed.toml");
    std::fs::write(&path, text).unwrap();
    path
}
