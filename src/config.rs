//! Start-up configuration, shared by the command line and the tests.

use std::path::PathBuf;

/// How the server is set up; built by `main` from the command line and environment.
#[derive(Debug, Clone)]
pub struct Config {
    pub data_dir: PathBuf,
    /// Mark cookies `Secure` and send HSTS: set when served over https (directly or behind a
    /// proxy that terminates TLS).
    pub secure_cookies: bool,
    /// The origin browsers use to reach the server (`https://heater.example.org`). When unset the
    /// request's own Host header is the expected origin of form posts.
    pub public_origin: Option<String>,
    /// Behind a reverse proxy: believe its `X-Forwarded-Proto` and `X-Forwarded-Host` for the
    /// expected origin. Off by default: anyone can send those headers to a bare server.
    pub trust_forwarded: bool,
    /// Session lifetime without activity, and in all.
    pub session_idle_s: i64,
    pub session_absolute_s: i64,
    /// A request body that sends nothing for this long is cut off (a stalled upload frees its
    /// connection and its staged rows).
    pub body_stall_timeout: std::time::Duration,
}

impl Config {
    pub fn new(data_dir: PathBuf) -> Config {
        Config {
            data_dir,
            secure_cookies: false,
            public_origin: None,
            trust_forwarded: false,
            session_idle_s: 12 * 3600,
            session_absolute_s: 14 * 24 * 3600,
            body_stall_timeout: std::time::Duration::from_secs(15),
        }
    }
}

/// The default data directory when neither `--data-dir` nor `EDDYBENCH_DATA` is given.
pub const DEFAULT_DATA_DIR: &str = "./eddybench-data";
