//! A real browser for tests: headless Chromium over WebDriver (chromedriver), at phone size,
//! against the app served on an ephemeral port.

use std::io::{BufRead, BufReader};
use std::process::{Child, Command, Stdio};
use std::sync::Arc;

use fantoccini::{Client, ClientBuilder, Locator};
use hyper_util::client::legacy::connect::HttpConnector;
use serde_json::json;

use eddybench::config::Config;
use eddybench::store::Store;
use eddybench::{AppState, app};

pub const PHONE_WIDTH: u32 = 390;
pub const PHONE_HEIGHT: u32 = 844;

/// The app on a real port, stopped when dropped.
pub struct Served {
    pub base: String,
    pub store: Store,
    shutdown: Option<tokio::sync::oneshot::Sender<()>>,
    _dir: tempfile::TempDir,
}

impl Served {
    pub async fn start() -> Served {
        let dir = tempfile::tempdir().unwrap();
        let store = Store::open(dir.path()).await.unwrap();
        let router = app(AppState {
            store: store.clone(),
            config: Arc::new(Config::new(dir.path().to_path_buf())),
            run_feeds: Default::default(),
        });
        // Bound before the server task starts, so it accepts as soon as the test connects.
        let listener = tokio::net::TcpListener::bind("127.0.0.1:0").await.unwrap();
        let base = format!("http://{}", listener.local_addr().unwrap());
        let (tx, rx) = tokio::sync::oneshot::channel::<()>();
        tokio::spawn(async move {
            axum::serve(listener, router)
                .with_graceful_shutdown(async {
                    let _ = rx.await;
                })
                .await
                .unwrap();
        });
        Served {
            base,
            store,
            shutdown: Some(tx),
            _dir: dir,
        }
    }

    pub fn url(&self, path: &str) -> String {
        format!("{}{path}", self.base)
    }
}

impl Drop for Served {
    fn drop(&mut self) {
        if let Some(tx) = self.shutdown.take() {
            let _ = tx.send(());
        }
    }
}

/// chromedriver, killed when dropped.
pub struct Driver {
    child: Child,
    pub url: String,
}

impl Driver {
    /// Starts chromedriver and waits for the line in which it says it is ready.
    pub fn start() -> Driver {
        let binary = std::env::var("CHROMEDRIVER").unwrap_or_else(|_| "chromedriver".into());
        let port = {
            let probe = std::net::TcpListener::bind("127.0.0.1:0").unwrap();
            probe.local_addr().unwrap().port()
        };
        let mut child = Command::new(&binary)
            .arg(format!("--port={port}"))
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap_or_else(|e| {
                panic!(
                    "cannot start {binary} ({e}): install chromium and chromium-driver (see README)"
                )
            });
        let stdout = child.stdout.take().unwrap();
        let mut lines = BufReader::new(stdout).lines();
        loop {
            match lines.next() {
                Some(Ok(line)) if line.contains("started successfully") => break,
                Some(Ok(_)) => continue,
                _ => panic!("chromedriver exited before it was ready"),
            }
        }
        // Keep draining its output so it never blocks on a full pipe.
        std::thread::spawn(move || for _ in lines {});
        Driver {
            child,
            url: format!("http://127.0.0.1:{port}"),
        }
    }

    /// A headless Chromium emulating a 390 × 844 phone.
    pub async fn phone(&self, profile: &std::path::Path) -> Client {
        let chromium = std::env::var("CHROMIUM").unwrap_or_else(|_| "/usr/bin/chromium".into());
        let mut capabilities = serde_json::Map::new();
        capabilities.insert(
            "goog:chromeOptions".into(),
            json!({
                "binary": chromium,
                "args": [
                    "--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
                    "--disable-quic", "--no-first-run", "--disable-background-networking",
                    "--disable-component-update", "--disable-sync",
                    format!("--user-data-dir={}", profile.display()),
                ],
                "mobileEmulation": {
                    "deviceMetrics": { "width": PHONE_WIDTH, "height": PHONE_HEIGHT, "pixelRatio": 2.0, "touch": true },
                    "userAgent": "Mozilla/5.0 (Linux; Android 14; Mobile) AppleWebKit/537.36 (KHTML, like Gecko) Chrome/156.0 Mobile Safari/537.36"
                }
            }),
        );
        ClientBuilder::new(HttpConnector::new())
            .capabilities(capabilities)
            .connect(&self.url)
            .await
            .expect("a WebDriver session with headless Chromium")
    }
}

impl Drop for Driver {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// Fills a field found by CSS selector, replacing what is there.
pub async fn fill(client: &Client, selector: &str, text: &str) {
    let field = client
        .find(Locator::Css(selector))
        .await
        .unwrap_or_else(|e| panic!("{selector}: {e}"));
    field.clear().await.unwrap();
    field.send_keys(text).await.unwrap();
}

pub async fn click(client: &Client, selector: &str) {
    client
        .find(Locator::Css(selector))
        .await
        .unwrap_or_else(|e| panic!("{selector}: {e}"))
        .click()
        .await
        .unwrap();
}

/// Clicks something that loads a new page (a link, a submit button) and waits until the old
/// page is gone, so the next look is at the new one.
pub async fn click_and_load(client: &Client, selector: &str) {
    let old_page = client.find(Locator::Css("html")).await.unwrap();
    click(client, selector).await;
    client
        .wait()
        .at_most(std::time::Duration::from_secs(20))
        .for_element(Locator::Css("html"))
        .await
        .unwrap();
    // The new document replaces the old one: the old root element goes stale.
    for _ in 0..2000 {
        match old_page.tag_name().await {
            Err(fantoccini::error::CmdError::Standard(e))
                if e.error == fantoccini::error::ErrorStatus::StaleElementReference =>
            {
                return;
            }
            _ => tokio::task::yield_now().await,
        }
    }
    panic!("clicking {selector} did not load a new page");
}

pub async fn texts(client: &Client, selector: &str) -> Vec<String> {
    let mut out = Vec::new();
    for element in client.find_all(Locator::Css(selector)).await.unwrap() {
        out.push(element.text().await.unwrap());
    }
    out
}

/// The page's scroll width against the viewport's: more means something overflows sideways.
pub async fn horizontal_overflow_px(client: &Client) -> i64 {
    let value = client
        .execute(
            "return document.documentElement.scrollWidth - window.innerWidth;",
            vec![],
        )
        .await
        .unwrap();
    value.as_i64().unwrap_or(i64::MAX)
}

/// Saves a screenshot under target/screenshots for a person to look at.
pub async fn screenshot(client: &Client, name: &str) {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&dir).unwrap();
    let png = client.screenshot().await.unwrap();
    std::fs::write(dir.join(format!("{name}.png")), png).unwrap();
}

#[allow(dead_code)] // not every browser test waits on a page that changes by itself
/// Waits until the texts of the elements matched by `selector` satisfy `ok` (polled every
/// 100 ms, for changes a page makes by itself) and returns them; panics with the last texts
/// seen after `seconds`.
pub async fn wait_for_texts(
    client: &Client,
    selector: &str,
    seconds: u64,
    ok: impl Fn(&[String]) -> bool,
) -> Vec<String> {
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs(seconds);
    loop {
        let seen = texts(client, selector).await;
        if ok(&seen) {
            return seen;
        }
        if std::time::Instant::now() > deadline {
            panic!("{selector} never became as expected; last seen {seen:?}");
        }
        tokio::time::sleep(std::time::Duration::from_millis(100)).await;
    }
}
