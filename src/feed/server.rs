//! The Eddybench server as the feeder sees it: the JSON API with a bearer token.

use std::time::Duration;

use axum::body::Bytes;
use http_body_util::{BodyExt, Full};
use hyper::header::{ACCEPT, AUTHORIZATION, CONTENT_TYPE, DATE};
use hyper::{Method, Request, StatusCode};
use hyper_util::client::legacy::Client;
use hyper_util::client::legacy::connect::HttpConnector;
use hyper_util::rt::TokioExecutor;
use serde::Deserialize;
use serde_json::Value;

const JSON: &str = "application/json";
const FORM: &str = "application/x-www-form-urlencoded";
/// A request that takes longer than this is treated as an outage and retried.
const REQUEST_TIMEOUT: Duration = Duration::from_secs(15);

#[derive(Clone)]
pub struct Server {
    client: Client<HttpConnector, Full<Bytes>>,
    base: String,
    token: String,
}

/// Why a request did not succeed.
#[derive(Debug, Clone, PartialEq)]
pub enum ApiError {
    /// No answer (down, unreachable, timed out): try again later.
    Unreachable(String),
    /// An answer other than success, with the server's message.
    Status(StatusCode, Value),
}

impl ApiError {
    /// The server's message, or what went wrong on the way.
    pub fn message(&self) -> String {
        match self {
            ApiError::Unreachable(why) => why.clone(),
            ApiError::Status(status, body) => body
                .get("error")
                .and_then(Value::as_str)
                .map_or_else(|| status.to_string(), |m| format!("{m} ({status})")),
        }
    }
}

/// The run as `GET /api/v1/runs/{id}` describes it.
#[derive(Debug, Clone, Deserialize)]
pub struct RunState {
    pub started_at: String,
    pub finished_at: Option<String>,
    pub url: String,
}

impl RunState {
    pub fn started_unix_s(&self) -> Option<i64> {
        parse_time(&self.started_at)
    }
}

pub fn parse_time(rfc3339: &str) -> Option<i64> {
    time::OffsetDateTime::parse(rfc3339, &time::format_description::well_known::Rfc3339)
        .ok()
        .map(|t| t.unix_timestamp())
}

impl Server {
    /// `base` is `http://host:port` (a trailing slash is ignored).
    pub fn new(base: &str, token: &str) -> anyhow::Result<Server> {
        let base = base.trim().trim_end_matches('/').to_string();
        if base.starts_with("https://") {
            anyhow::bail!(
                "the feeder speaks plain http only; reach the server on the bench's LAN, or through a local tunnel"
            );
        }
        if !base.starts_with("http://") {
            anyhow::bail!("--server takes an address like http://192.0.2.5:8080");
        }
        let mut connector = HttpConnector::new();
        connector.set_nodelay(true);
        connector.set_connect_timeout(Some(Duration::from_secs(5)));
        Ok(Server {
            client: Client::builder(TokioExecutor::new()).build(connector),
            base,
            token: token.trim().to_string(),
        })
    }

    pub fn base(&self) -> &str {
        &self.base
    }

    /// Sends a request and returns the JSON answer of a 2xx, with the server's `Date`.
    pub async fn call(
        &self,
        method: Method,
        path: &str,
        body: Option<Vec<u8>>,
    ) -> Result<(Value, Option<String>), ApiError> {
        self.send(method, path, body.map(|b| (JSON, b))).await
    }

    async fn send(
        &self,
        method: Method,
        path: &str,
        body: Option<(&str, Vec<u8>)>,
    ) -> Result<(Value, Option<String>), ApiError> {
        let mut request = Request::builder()
            .method(method)
            .uri(format!("{}{path}", self.base))
            .header(AUTHORIZATION, format!("Bearer {}", self.token))
            .header(ACCEPT, JSON);
        let body = match body {
            Some((media_type, bytes)) => {
                request = request.header(CONTENT_TYPE, media_type);
                bytes
            }
            None => Vec::new(),
        };
        let request = request
            .body(Full::new(Bytes::from(body)))
            .map_err(|e| ApiError::Unreachable(e.to_string()))?;
        let answer = async {
            let response = self
                .client
                .request(request)
                .await
                .map_err(|e| ApiError::Unreachable(describe(&e)))?;
            let status = response.status();
            let date = response
                .headers()
                .get(DATE)
                .and_then(|d| d.to_str().ok())
                .map(str::to_string);
            let bytes = response
                .into_body()
                .collect()
                .await
                .map_err(|e| ApiError::Unreachable(e.to_string()))?
                .to_bytes();
            let json = serde_json::from_slice(&bytes).unwrap_or(Value::Null);
            if status.is_success() {
                Ok((json, date))
            } else if status.is_server_error() {
                Err(ApiError::Unreachable(format!(
                    "the server answered {status}"
                )))
            } else {
                Err(ApiError::Status(status, json))
            }
        };
        tokio::time::timeout(REQUEST_TIMEOUT, answer)
            .await
            .unwrap_or_else(|_| Err(ApiError::Unreachable("no answer in time".into())))
    }

    /// Posts a form (as a page would) asking for a JSON answer.
    pub async fn post_form(&self, path: &str, fields: &[(&str, &str)]) -> Result<Value, ApiError> {
        let body = form_urlencoded::Serializer::new(String::new())
            .extend_pairs(fields)
            .finish();
        self.send(Method::POST, path, Some((FORM, body.into_bytes())))
            .await
            .map(|(json, _)| json)
    }

    pub async fn run(&self, run: i64) -> Result<RunState, ApiError> {
        let (json, _) = self
            .call(Method::GET, &format!("/api/v1/runs/{run}"), None)
            .await?;
        serde_json::from_value(json).map_err(|e| ApiError::Unreachable(e.to_string()))
    }
}

/// The innermost cause of a client error: "connection refused", not "client error (Connect)".
fn describe(error: &hyper_util::client::legacy::Error) -> String {
    let mut source: &dyn std::error::Error = error;
    while let Some(next) = source.source() {
        source = next;
    }
    source.to_string()
}
