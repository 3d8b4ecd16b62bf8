//! The headers of every response (every route of the route table, as every kind of visitor,
//! plus a 404, a 405 and error answers), cookies, pages free of inline script and style, HSTS
//! and `Secure` cookies only over https, and the slow-down of repeated failed sign-ins.

mod access;
mod common;

use std::sync::Arc;

use access::{PRINCIPALS, Principal, World, fill, payload, request};
use axum::Router;
use axum::body::Body;
use axum::http::{Method, Request, StatusCode, header};
use common::{HOST, PASSWORD, Page, TestApp, cookie_value, form_body};
use eddybench::config::Config;
use eddybench::secrets::hash_password;
use eddybench::store::{Store, UserRole};
use eddybench::web::{Access, route_table};
use eddybench::{AppState, app};
use http_body_util::BodyExt;
use tower::ServiceExt;

// ---- what every response must carry -----------------------------------------------------------

fn header_values(page: &Page, name: &str) -> Vec<String> {
    page.headers
        .get_all(name)
        .iter()
        .map(|v| v.to_str().unwrap_or("").to_string())
        .collect()
}

/// The security headers of one response; `https` says whether the server is configured for it.
fn check_headers(what: &str, page: &Page, https: bool, problems: &mut Vec<String>) {
    let mut problem = |text: String| problems.push(format!("{what} ({}): {text}", page.status));
    let csp = header_values(page, "content-security-policy");
    match csp.as_slice() {
        [policy] => {
            let directives: Vec<&str> = policy.split(';').map(str::trim).collect();
            for needed in [
                "object-src 'none'",
                "base-uri 'none'",
                "frame-ancestors 'none'",
            ] {
                if !directives.contains(&needed) {
                    problem(format!("the policy {policy:?} lacks {needed}"));
                }
            }
            for unsafe_source in ["'unsafe-inline'", "'unsafe-eval'", "*"] {
                if policy
                    .split_whitespace()
                    .any(|s| s.trim_end_matches(';') == unsafe_source)
                {
                    problem(format!("the policy {policy:?} allows {unsafe_source}"));
                }
            }
        }
        other => problem(format!(
            "one Content-Security-Policy expected, got {other:?}"
        )),
    }
    if header_values(page, "x-content-type-options") != ["nosniff"] {
        problem("X-Content-Type-Options is not nosniff".into());
    }
    if header_values(page, "x-frame-options") != ["DENY"] {
        problem("X-Frame-Options is not DENY".into());
    }
    let hsts = header_values(page, "strict-transport-security");
    match (https, hsts.as_slice()) {
        (false, []) => {}
        (false, sent) => problem(format!("HSTS over plain http: {sent:?}")),
        (true, [value]) if value.starts_with("max-age=") => {}
        (true, sent) => problem(format!("no HSTS over https: {sent:?}")),
    }
    for cookie in header_values(page, "set-cookie") {
        let attributes: Vec<&str> = cookie.split(';').map(str::trim).collect();
        for needed in ["HttpOnly", "SameSite=Lax"] {
            if !attributes.contains(&needed) {
                problem(format!("the cookie {cookie:?} is not {needed}"));
            }
        }
        if attributes.contains(&"Secure") != https {
            problem(format!(
                "the cookie {cookie:?}: Secure must be set exactly over https"
            ));
        }
    }
}

/// An HTML page must run no inline script and carry no inline style (the policy would block
/// them, breaking the page): no `<script>` without `src`, no `<style>`, no `style=`, no `on…=`
/// handlers, no `javascript:` addresses.
fn check_html(what: &str, page: &Page, problems: &mut Vec<String>) {
    let content_type = header_values(page, "content-type").join(",");
    if !content_type.starts_with("text/html") {
        return;
    }
    let html = page.html();
    for (selector, why) in [
        ("script:not([src])", "an inline script"),
        ("style", "a <style> block"),
        ("[style]", "a style= attribute"),
    ] {
        let selector = scraper::Selector::parse(selector).unwrap();
        if let Some(element) = html.select(&selector).next() {
            let tag = element.html().chars().take(120).collect::<String>();
            problems.push(format!("{what}: {why}: {tag}"));
        }
    }
    let everything = scraper::Selector::parse("*").unwrap();
    for element in html.select(&everything) {
        for (name, value) in element.value().attrs() {
            if name.starts_with("on") {
                problems.push(format!("{what}: an inline handler {name}={value:?}"));
            }
            if value
                .trim_start()
                .to_ascii_lowercase()
                .starts_with("javascript:")
            {
                problems.push(format!("{what}: a script address {name}={value:?}"));
            }
        }
    }
}

fn check(what: &str, page: &Page, https: bool, problems: &mut Vec<String>) {
    check_headers(what, page, https, problems);
    check_html(what, page, problems);
}

fn assert_no_problems(problems: &[String]) {
    assert!(
        problems.is_empty(),
        "{} problems:\n{}",
        problems.len(),
        problems.join("\n")
    );
}

// ---- every route, every visitor ---------------------------------------------------------------

#[tokio::test]
async fn every_response_of_every_route_carries_the_security_headers() {
    let world = World::new().await;
    let mut problems = Vec::new();
    let mut html_pages = 0;
    let table = route_table();
    // Reads as everyone first; then writes, as visitors they refuse and as a token (whose
    // writes end no session the reads need).
    let reads = table.iter().filter(|r| r.method == Method::GET);
    let writes = table.iter().filter(|r| r.method != Method::GET);
    let mut asks = Vec::new();
    for route in reads {
        asks.extend(PRINCIPALS.iter().map(|&(p, name)| (route, p, name)));
    }
    for route in writes {
        for &(principal, name) in &PRINCIPALS {
            let refused_browser = principal == Principal::Viewer && route.access > Access::Public;
            if matches!(
                principal,
                Principal::Anonymous | Principal::Token | Principal::RevokedToken
            ) || refused_browser
            {
                asks.push((route, principal, name));
            }
        }
    }
    for (route, principal, name) in asks {
        let address = fill(route.path, &world, principal).unwrap();
        let body = payload(route).unwrap();
        let page = world
            .app
            .send(request(route, &address, &body, &world, principal))
            .await;
        if header_values(&page, "content-type")
            .join("")
            .starts_with("text/html")
        {
            html_pages += 1;
        }
        check(
            &format!("{} {address} as {name}", route.method),
            &page,
            false,
            &mut problems,
        );
    }
    assert!(html_pages > 30, "the walk saw {html_pages} pages");
    assert_no_problems(&problems);
}

#[tokio::test]
async fn not_found_wrong_method_and_errors_carry_them_too() {
    let world = World::new().await;
    let app = &world.app;
    let editor = &world.editor;
    let mut problems = Vec::new();
    let mut expect = |what: &str, page: Page, status: StatusCode| {
        if page.status != status {
            problems.push(format!("{what}: {} instead of {status}", page.status));
        }
        check(what, &page, false, &mut problems);
    };
    expect(
        "no such page",
        app.get("/no/such/page", None).await,
        StatusCode::NOT_FOUND,
    );
    expect(
        "no such build",
        app.get("/builds/no-such-build", Some(editor)).await,
        StatusCode::NOT_FOUND,
    );
    expect(
        "no such API address",
        app.get("/api/v1/nothing", None).await,
        StatusCode::NOT_FOUND,
    );
    expect(
        "no such link",
        app.get(&format!("/s/{}", "ab".repeat(32)), None).await,
        StatusCode::NOT_FOUND,
    );
    for (method, path) in [
        ("PUT", "/login"),
        ("DELETE", "/builds"),
        ("POST", "/healthz"),
    ] {
        let page = app
            .send(
                Request::builder()
                    .method(method)
                    .uri(path)
                    .header(header::HOST, HOST)
                    .body(Body::empty())
                    .unwrap(),
            )
            .await;
        expect(
            &format!("{method} {path}"),
            page,
            StatusCode::METHOD_NOT_ALLOWED,
        );
    }
    expect(
        "a form without its token",
        app.post_raw(
            "/builds",
            Some(editor),
            Some(common::ORIGIN),
            &form_body(&[("name", "x")]),
        )
        .await,
        StatusCode::BAD_REQUEST,
    );
    expect(
        "a form that fails validation",
        app.post_form("/builds", editor, &[("name", "  ")]).await,
        StatusCode::UNPROCESSABLE_ENTITY,
    );
    expect(
        "a form too large to read",
        app.post_form("/builds", editor, &[("name", &"x".repeat(300 * 1024))])
            .await,
        StatusCode::BAD_REQUEST,
    );
    expect(
        "an unknown token",
        app.post_json("/api/v1/builds", Some("not-a-token"), "{}")
            .await,
        StatusCode::UNAUTHORIZED,
    );
    expect(
        "malformed JSON",
        app.post_json("/api/v1/builds", Some(&world.token), "{")
            .await,
        StatusCode::UNPROCESSABLE_ENTITY,
    );
    expect(
        "a static file",
        app.get("/static/style.css", None).await,
        StatusCode::OK,
    );
    expect(
        "a missing static file",
        app.get("/static/nothing.css", None).await,
        StatusCode::NOT_FOUND,
    );
    for climb in [
        "/static/../Cargo.toml",
        "/static/%2e%2e/Cargo.toml",
        "/static/..%2fCargo.toml",
    ] {
        let page = app.get(climb, None).await;
        if page.status.is_success() || page.body.contains("[package]") {
            problems.push(format!("{climb} served a file outside static/"));
        }
        check(climb, &page, false, &mut problems);
    }
    assert_no_problems(&problems);
}

// ---- over https -------------------------------------------------------------------------------

const HTTPS_ORIGIN: &str = "https://bench.test";

/// The app configured as served over https (directly or behind a proxy that ends TLS).
struct Https {
    router: Router,
    store: Store,
    _dir: tempfile::TempDir,
}

impl Https {
    async fn new() -> Https {
        let dir = tempfile::tempdir().unwrap();
        let store = Store::open(dir.path()).await.unwrap();
        let mut config = Config::new(dir.path().to_path_buf());
        config.secure_cookies = true;
        let router = app(AppState {
            store: store.clone(),
            config: Arc::new(config),
            run_feeds: Default::default(),
        });
        Https {
            router,
            store,
            _dir: dir,
        }
    }

    async fn send(&self, request: Request<Body>) -> Page {
        let response = self.router.clone().oneshot(request).await.unwrap();
        let status = response.status();
        let headers = response.headers().clone();
        let bytes = response.into_body().collect().await.unwrap().to_bytes();
        Page {
            status,
            headers,
            body: String::from_utf8_lossy(&bytes).into_owned(),
        }
    }

    async fn get(&self, path: &str, cookie: Option<&str>) -> Page {
        let mut request = Request::get(path).header(header::HOST, HOST);
        if let Some(cookie) = cookie {
            request = request.header(header::COOKIE, cookie);
        }
        self.send(request.body(Body::empty()).unwrap()).await
    }

    async fn post(&self, path: &str, cookie: &str, fields: &[(&str, &str)]) -> Page {
        self.send(
            Request::post(path)
                .header(header::HOST, HOST)
                .header(header::ORIGIN, HTTPS_ORIGIN)
                .header(header::COOKIE, cookie)
                .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
                .body(Body::from(form_body(fields)))
                .unwrap(),
        )
        .await
    }
}

#[tokio::test]
async fn over_https_cookies_are_secure_and_hsts_is_sent() {
    let https = Https::new().await;
    https
        .store
        .create_user("ada", "Ada", UserRole::Editor, &hash_password(PASSWORD))
        .await
        .unwrap();
    let mut problems = Vec::new();
    let login_page = https.get("/login", None).await;
    check("the sign-in page", &login_page, true, &mut problems);
    let pre = cookie_value(&login_page, "eb_csrf").expect("the sign-in form's token cookie");
    let csrf = login_page.attr("input[name=csrf]", "value").unwrap();
    let signed_in = https
        .post(
            "/login",
            &format!("eb_csrf={pre}"),
            &[
                ("csrf", &csrf),
                ("name", "ada"),
                ("password", PASSWORD),
                ("next", "/"),
            ],
        )
        .await;
    assert_eq!(
        signed_in.status,
        StatusCode::SEE_OTHER,
        "{}",
        signed_in.body
    );
    check("signing in", &signed_in, true, &mut problems);
    let session = cookie_value(&signed_in, "eb_session").expect("a session cookie");
    let cookie = format!("eb_session={session}");
    let home = https.get("/", Some(&cookie)).await;
    assert_eq!(home.status, StatusCode::OK);
    check("the builds page", &home, true, &mut problems);
    let token = home
        .attr("form[action='/logout'] input[name=csrf]", "value")
        .unwrap();
    check(
        "a 404",
        &https.get("/nowhere", None).await,
        true,
        &mut problems,
    );
    check(
        "a refusal",
        &https.get("/", None).await,
        true,
        &mut problems,
    );
    let out = https.post("/logout", &cookie, &[("csrf", &token)]).await;
    assert_eq!(out.status, StatusCode::SEE_OTHER);
    check("signing out", &out, true, &mut problems);
    assert_eq!(cookie_value(&out, "eb_session").as_deref(), Some(""));
    assert_no_problems(&problems);
}

#[tokio::test]
async fn over_plain_http_the_sign_in_cookies_are_not_secure() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let mut problems = Vec::new();
    let page = app.login_attempt("ada", PASSWORD, "/").await;
    assert_eq!(page.status, StatusCode::SEE_OTHER);
    assert_eq!(
        header_values(&page, "set-cookie").len(),
        2,
        "session set, form token cleared"
    );
    check("signing in", &page, false, &mut problems);
    assert_no_problems(&problems);
}

// ---- slowing down guesses ---------------------------------------------------------------------

const NOT_MATCHING: &str = "That name and password do not match an account.";

/// The message of a refused sign-in, and the wait it names when it is the slow-down.
fn refusal(page: &Page) -> (String, Option<i64>) {
    assert_eq!(page.status, StatusCode::UNAUTHORIZED, "{}", page.body);
    let message = page.select_texts("p.error").join(" ");
    let wait = message
        .split_once("Wait ")
        .and_then(|(_, rest)| rest.split_once(" s"))
        .map(|(seconds, _)| seconds.parse::<i64>().expect("whole seconds"));
    (message, wait)
}

/// Fails to sign in until the answer is a slow-down of at least `at_least_s` (living through
/// the shorter waits on the way); returns its message and wait. A long wait keeps the test
/// from outliving it on a slow machine.
async fn fail_until_waiting(app: &TestApp, name: &str, at_least_s: i64) -> (String, i64) {
    for _ in 0..40 {
        let (message, wait) = refusal(&app.login_attempt(name, "a wrong guess", "/").await);
        match wait {
            None => assert_eq!(message, NOT_MATCHING),
            Some(wait) if wait >= at_least_s => return (message, wait),
            Some(wait) => app.store.backdate_login_failure(name, wait).await.unwrap(),
        }
    }
    panic!("forty failures on {name} and no wait of {at_least_s} s");
}

/// The message without its number of seconds (which may tick between two answers).
fn without_digits(message: &str) -> String {
    message.chars().filter(|c| !c.is_ascii_digit()).collect()
}

#[tokio::test]
async fn repeated_failures_are_refused_at_once_with_the_same_message_for_every_name() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let (unknown, unknown_wait) = fail_until_waiting(&app, "nobody", 30).await;
    let (known, known_wait) = fail_until_waiting(&app, "ada", 30).await;
    assert_eq!(
        without_digits(&known),
        without_digits(&unknown),
        "the slow-down tells nothing about who has an account"
    );
    assert!(
        (known_wait - unknown_wait).abs() <= 1,
        "{known} / {unknown}"
    );
    assert!(known.starts_with("Too many failed sign-ins"), "{known}");
    // While the wait lasts even the right password is refused, before it is checked: the
    // attempt is not counted, and says the same.
    let counted = app.store.login_failures("ada").await.unwrap();
    let (right, wait) = refusal(&app.login_attempt("ada", PASSWORD, "/").await);
    assert!(wait.is_some(), "{right}");
    assert_eq!(app.store.login_failures("ada").await.unwrap(), counted);
    assert_eq!(app.count_rows("sessions").await, 0);
    // Another account is not slowed down.
    assert!(
        app.signed_in("bob", UserRole::Viewer)
            .await
            .cookie
            .starts_with("eb_session=")
    );
}

#[tokio::test]
async fn the_slow_down_keeps_a_guesser_under_a_hundred_failures_an_hour() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    // The fastest guesser: tries again the moment each wait is over. Waits are lived through by
    // moving the stored failure time back by the wait the server names.
    let mut elapsed_s = 0;
    let mut failures = 0;
    let mut waits = Vec::new();
    while elapsed_s < 3600 {
        let (message, wait) = refusal(&app.login_attempt("ada", "a wrong guess", "/").await);
        match wait {
            None => {
                assert_eq!(message, NOT_MATCHING);
                failures += 1;
            }
            Some(wait) => {
                assert!(wait > 0, "{message}");
                waits.push(wait);
                elapsed_s += wait;
                app.store.backdate_login_failure("ada", wait).await.unwrap();
            }
        }
        assert!(
            failures <= 100,
            "more than 100 failures within {elapsed_s} s"
        );
    }
    println!("{failures} failures in an hour; waits {waits:?}");
    assert!(failures >= 3, "a few honest typos are not slowed down");
}

#[tokio::test]
async fn the_real_user_gets_back_in_once_the_wait_is_over() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let (_, wait) = fail_until_waiting(&app, "ada", 30).await;
    assert!(
        app.login("ada", PASSWORD).await.is_none(),
        "not before the wait is over"
    );
    app.store.backdate_login_failure("ada", wait).await.unwrap();
    let session = app.login("ada", PASSWORD).await.expect("in after the wait");
    assert_eq!(app.get("/", Some(&session)).await.status, StatusCode::OK);
    assert_eq!(
        app.store.login_failures("ada").await.unwrap(),
        None,
        "a good sign-in forgets the failures"
    );
}

#[tokio::test]
async fn guesses_sent_at_once_do_not_slip_past_the_wait() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let (_, wait) = fail_until_waiting(&app, "ada", 1).await;
    app.store.backdate_login_failure("ada", wait).await.unwrap();
    let (before, _) = app.store.login_failures("ada").await.unwrap().unwrap();
    // Ten guesses at the same moment: one may be checked, the others must wait for it.
    let answers = futures_util::future::join_all(
        (0..10).map(|_| app.login_attempt("ada", "a wrong guess", "/")),
    )
    .await;
    let checked = answers
        .iter()
        .filter(|page| refusal(page).1.is_none())
        .count();
    let (after, _) = app.store.login_failures("ada").await.unwrap().unwrap();
    assert_eq!(
        checked, 1,
        "{checked} of ten guesses sent at once were checked"
    );
    assert_eq!(after, before + 1);
}

// ---- where signing in leads -------------------------------------------------------------------

/// Browsers drop tabs and line breaks from an address before reading it (the URL standard), so
/// `/<tab>/evil.test` is `//evil.test`, another site: a `next` with any control character is
/// refused like any other address off this site.
#[tokio::test]
async fn signing_in_leads_nowhere_off_this_site() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let session = app.login("ada", PASSWORD).await.unwrap();
    for next in [
        "//evil.test/",
        "/\t/evil.test/",
        "/\r\n/evil.test/",
        "/\n/evil.test/",
        "\t//evil.test/",
        "/\\evil.test/",
        "https://evil.test/",
    ] {
        let posted = app.login_attempt("ada", PASSWORD, next).await;
        assert_eq!(
            posted.status,
            StatusCode::SEE_OTHER,
            "{next:?}: {}",
            posted.body
        );
        assert_eq!(
            posted.location(),
            "/",
            "after signing in with next={next:?}"
        );
        let query = form_body(&[("next", next)]);
        let visited = app.get(&format!("/login?{query}"), Some(&session)).await;
        assert_eq!(visited.status, StatusCode::SEE_OTHER, "{next:?}");
        assert_eq!(
            visited.location(),
            "/",
            "signed in, visiting /login?next={next:?}"
        );
    }
    // A path of this site is kept, query and all.
    let kept = app
        .login_attempt("ada", PASSWORD, "/builds/x?tab=runs")
        .await;
    assert_eq!(kept.location(), "/builds/x?tab=runs");
}
