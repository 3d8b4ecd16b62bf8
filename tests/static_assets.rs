//! Stylesheets and scripts are embedded in the binary and linked under names that carry their
//! content's hash, cached as immutable (RFC 8246); the plain names are revalidated. A binary
//! copied away from the source tree still serves them.

mod common;
#[path = "crash_trial/mod.rs"]
mod crash_trial;

use axum::body::{Body, Bytes};
use axum::http::{Request, StatusCode, header};
use common::{HOST, TestApp};
use http_body_util::{BodyExt, Full};
use hyper_util::client::legacy::Client;
use hyper_util::rt::TokioExecutor;

/// The stylesheet the sign-in page links.
fn linked_stylesheet(html: &str) -> String {
    let page = scraper::Html::parse_document(html);
    let link = scraper::Selector::parse("link[rel=stylesheet]").unwrap();
    page.select(&link)
        .next()
        .and_then(|l| l.value().attr("href"))
        .expect("the page links a stylesheet")
        .to_string()
}

fn source_file(name: &str) -> Vec<u8> {
    std::fs::read(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("static")
            .join(name),
    )
    .unwrap()
}

#[tokio::test]
async fn pages_link_versioned_stylesheets_cached_as_immutable() {
    let app = TestApp::new().await;
    let login = app.get("/login", None).await;
    assert_eq!(login.status, StatusCode::OK);
    let href = linked_stylesheet(&login.body);
    let hash = href
        .strip_prefix("/static/style.")
        .and_then(|rest| rest.strip_suffix(".css"))
        .unwrap_or_else(|| panic!("not a versioned name: {href}"));
    assert_eq!(hash.len(), 12, "{href}");
    assert!(hash.chars().all(|c| c.is_ascii_hexdigit()), "{href}");

    let sheet = app.get(&href, None).await;
    assert_eq!(sheet.status, StatusCode::OK);
    assert_eq!(sheet.body.as_bytes(), source_file("style.css"));
    assert_eq!(
        sheet.headers[header::CONTENT_TYPE],
        "text/css; charset=utf-8"
    );
    assert_eq!(
        sheet.headers[header::CACHE_CONTROL],
        "public, max-age=31536000, immutable"
    );

    // The validator answers 304 without the body.
    let etag = sheet.headers[header::ETAG].clone();
    let again = app
        .send(
            Request::get(&href)
                .header(header::HOST, HOST)
                .header(header::IF_NONE_MATCH, etag)
                .body(Body::empty())
                .unwrap(),
        )
        .await;
    assert_eq!(again.status, StatusCode::NOT_MODIFIED);
    assert!(again.body.is_empty());
}

#[tokio::test]
async fn plain_names_are_revalidated_and_unknown_names_are_not_found() {
    let app = TestApp::new().await;
    let plain = app.get("/static/run_page.js", None).await;
    assert_eq!(plain.status, StatusCode::OK);
    assert_eq!(plain.body.as_bytes(), source_file("run_page.js"));
    assert_eq!(plain.headers[header::CACHE_CONTROL], "public, no-cache");
    assert_eq!(
        plain.headers[header::CONTENT_TYPE],
        "text/javascript; charset=utf-8"
    );
    for missing in [
        "/static/style.000000000000.css",
        "/static/nothing.css",
        "/static/Cargo.toml",
        "/static/",
    ] {
        let page = app.get(missing, None).await;
        assert_eq!(page.status, StatusCode::NOT_FOUND, "{missing}");
    }
}

#[tokio::test]
async fn a_copied_binary_serves_its_stylesheet() {
    let elsewhere = tempfile::tempdir().unwrap();
    let binary = elsewhere.path().join("eddybench");
    std::fs::copy(env!("CARGO_BIN_EXE_eddybench"), &binary).unwrap();
    let data = elsewhere.path().join("data");
    let server = crash_trial::Server::start(&binary, &data);
    let client = Client::builder(TokioExecutor::new()).build_http::<Full<Bytes>>();
    let get = |path: String| {
        let client = client.clone();
        let url = format!("http://{}{path}", server.address);
        async move {
            let response = client
                .request(Request::get(url).body(Full::default()).unwrap())
                .await
                .unwrap();
            let status = response.status();
            let body = response.into_body().collect().await.unwrap().to_bytes();
            (status, body)
        }
    };
    let (status, login) = get("/login".into()).await;
    assert_eq!(status, StatusCode::OK);
    let href = linked_stylesheet(&String::from_utf8_lossy(&login));
    let (status, sheet) = get(href).await;
    assert_eq!(status, StatusCode::OK);
    assert_eq!(sheet.as_ref(), source_file("style.css").as_slice());
    server.kill();
}
