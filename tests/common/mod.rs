//! Shared fixtures: a fresh database per test, the real router, signed-in clients.
#![allow(dead_code, unused_imports)]

pub mod chart_fixtures;
pub mod fixtures;
pub use fixtures::*;

use std::sync::Arc;

use axum::Router;
use axum::body::Body;
use axum::http::{Request, Response, StatusCode, header};
use http_body_util::BodyExt;
use tower::ServiceExt;

use eddybench::config::Config;
use eddybench::secrets::hash_password;
use eddybench::store::{Store, UserRole};
use eddybench::{AppState, app};

pub const HOST: &str = "bench.test";
pub const ORIGIN: &str = "http://bench.test";
pub const PASSWORD: &str = "a long test password";

pub struct TestApp {
    pub store: Store,
    pub router: Router,
    _dir: tempfile::TempDir,
}

/// A signed-in browser: its session cookie and the form token of its session.
#[derive(Clone, Debug)]
pub struct Session {
    pub cookie: String,
    pub csrf: String,
}

pub struct Page {
    pub status: StatusCode,
    pub headers: axum::http::HeaderMap,
    pub body: String,
}

impl Page {
    pub fn html(&self) -> scraper::Html {
        scraper::Html::parse_document(&self.body)
    }

    pub fn select_texts(&self, selector: &str) -> Vec<String> {
        let selector = scraper::Selector::parse(selector).expect("valid selector");
        self.html()
            .select(&selector)
            .map(|e| {
                e.text()
                    .collect::<String>()
                    .split_whitespace()
                    .collect::<Vec<_>>()
                    .join(" ")
            })
            .collect()
    }

    pub fn count(&self, selector: &str) -> usize {
        self.select_texts(selector).len()
    }

    pub fn attr(&self, selector: &str, name: &str) -> Option<String> {
        let selector = scraper::Selector::parse(selector).expect("valid selector");
        self.html()
            .select(&selector)
            .next()
            .and_then(|e| e.value().attr(name).map(str::to_string))
    }

    pub fn location(&self) -> String {
        self.headers
            .get(header::LOCATION)
            .map(|v| v.to_str().unwrap().to_string())
            .unwrap_or_default()
    }

    pub fn json(&self) -> serde_json::Value {
        serde_json::from_str(&self.body).unwrap_or_else(|e| panic!("not JSON ({e}): {}", self.body))
    }
}

impl TestApp {
    pub async fn new() -> TestApp {
        let dir = tempfile::tempdir().unwrap();
        let store = Store::open(dir.path()).await.unwrap();
        let state = AppState {
            store: store.clone(),
            config: Arc::new(Config::new(dir.path().to_path_buf())),
            run_feeds: Default::default(),
        };
        TestApp {
            router: app(state),
            store,
            _dir: dir,
        }
    }

    pub fn data_dir(&self) -> &std::path::Path {
        self._dir.path()
    }

    pub async fn add_user(&self, name: &str, role: UserRole) {
        // A cheap hash would hide nothing here, but the real one keeps the test honest.
        let hash = hash_password(PASSWORD);
        self.store
            .create_user(name, name, role, &hash)
            .await
            .unwrap();
    }

    /// A user of the role, signed in through the real login form.
    pub async fn signed_in(&self, name: &str, role: UserRole) -> Session {
        self.add_user(name, role).await;
        self.login(name, PASSWORD).await.expect("login succeeds")
    }

    /// Posts the login form as a browser would (token cookie, Origin) and returns the answer.
    pub async fn login_attempt(&self, name: &str, password: &str, next: &str) -> Page {
        let page = self
            .send(
                Request::get("/login")
                    .header(header::HOST, HOST)
                    .body(Body::empty())
                    .unwrap(),
            )
            .await;
        let csrf = page
            .attr("input[name=csrf]", "value")
            .expect("login form has a token");
        let pre_cookie = cookie_value(&page, "eb_csrf").expect("login page sets its token cookie");
        let body = form_body(&[
            ("csrf", &csrf),
            ("name", name),
            ("password", password),
            ("next", next),
        ]);
        self.send(
            Request::post("/login")
                .header(header::HOST, HOST)
                .header(header::ORIGIN, ORIGIN)
                .header(header::COOKIE, format!("eb_csrf={pre_cookie}"))
                .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
                .body(Body::from(body))
                .unwrap(),
        )
        .await
    }

    pub async fn login(&self, name: &str, password: &str) -> Option<Session> {
        let response = self.login_attempt(name, password, "/").await;
        let session = cookie_value(&response, "eb_session").filter(|v| !v.is_empty())?;
        let cookie = format!("eb_session={session}");
        let home = self
            .get(
                "/builds/new",
                Some(&Session {
                    cookie: cookie.clone(),
                    csrf: String::new(),
                }),
            )
            .await;
        let csrf = home
            .attr("input[name=csrf]", "value")
            .or_else(|| {
                // A viewer gets no build form; the sign-out form carries the token too.
                home.attr("form[action='/logout'] input[name=csrf]", "value")
            })
            .unwrap_or_default();
        let csrf = if csrf.is_empty() {
            let page = self
                .get(
                    "/",
                    Some(&Session {
                        cookie: cookie.clone(),
                        csrf: String::new(),
                    }),
                )
                .await;
            page.attr("form[action='/logout'] input[name=csrf]", "value")
                .unwrap_or_default()
        } else {
            csrf
        };
        Some(Session { cookie, csrf })
    }

    pub async fn send(&self, request: Request<Body>) -> Page {
        let response: Response<Body> = self.router.clone().oneshot(request).await.unwrap();
        let status = response.status();
        let headers = response.headers().clone();
        let bytes = response.into_body().collect().await.unwrap().to_bytes();
        Page {
            status,
            headers,
            body: String::from_utf8_lossy(&bytes).into_owned(),
        }
    }

    pub async fn get(&self, path: &str, session: Option<&Session>) -> Page {
        let mut request = Request::get(path).header(header::HOST, HOST);
        if let Some(s) = session {
            request = request.header(header::COOKIE, &s.cookie);
        }
        self.send(request.body(Body::empty()).unwrap()).await
    }

    /// A form post as a browser on this site sends it: Origin, cookie and the session's token.
    pub async fn post_form(&self, path: &str, session: &Session, fields: &[(&str, &str)]) -> Page {
        let mut all = vec![("csrf", session.csrf.as_str())];
        all.extend_from_slice(fields);
        self.post_raw(path, Some(session), Some(ORIGIN), &form_body(&all))
            .await
    }

    pub async fn post_raw(
        &self,
        path: &str,
        session: Option<&Session>,
        origin: Option<&str>,
        body: &str,
    ) -> Page {
        let mut request = Request::post(path)
            .header(header::HOST, HOST)
            .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded");
        if let Some(s) = session {
            request = request.header(header::COOKIE, &s.cookie);
        }
        if let Some(origin) = origin {
            request = request.header(header::ORIGIN, origin);
        }
        self.send(request.body(Body::from(body.to_string())).unwrap())
            .await
    }

    pub async fn post_json(&self, path: &str, bearer: Option<&str>, body: &str) -> Page {
        let mut request = Request::post(path)
            .header(header::HOST, HOST)
            .header(header::CONTENT_TYPE, "application/json");
        if let Some(token) = bearer {
            request = request.header(header::AUTHORIZATION, format!("Bearer {token}"));
        }
        self.send(request.body(Body::from(body.to_string())).unwrap())
            .await
    }

    pub async fn count_rows(&self, table: &str) -> i64 {
        self.store.count_rows(table).await.unwrap()
    }
}

pub fn cookie_value(page: &Page, name: &str) -> Option<String> {
    page.headers
        .get_all(header::SET_COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .filter_map(|v| v.split(';').next())
        .filter_map(|pair| pair.split_once('='))
        .find(|(k, _)| *k == name)
        .map(|(_, v)| v.to_string())
}

pub fn form_body(fields: &[(&str, &str)]) -> String {
    form_urlencoded::Serializer::new(String::new())
        .extend_pairs(fields)
        .finish()
}
