//! Read-only share links through the web: made on the build page and by the API, shown once,
//! opening the build's read pages and nothing else, limited to a revision, revoked, expired, and
//! refused to viewers.

mod common;

use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use common::{HOST, ORIGIN, Page, Session, TestApp};
use eddybench::secrets::{random_token, token_hash};
use eddybench::store::{BuildId, NewShare, Run, TableFingerprint, now_unix_s};
use serde_json::json;

/// The demo builds, signed-in demo editor and viewer, their tokens, and a picture on one run of
/// each revision of the main build that has runs.
struct Demo {
    app: TestApp,
    editor: Session,
    viewer: Session,
    editor_token: String,
    viewer_token: String,
    slug: String,
    build_id: BuildId,
    other_name: String,
    runs: Vec<Run>,
}

impl Demo {
    async fn new() -> Demo {
        let app = TestApp::new().await;
        let login = eddybench::demo::seed(&app.store).await.unwrap();
        let editor = app
            .login(&login.editor_name, &login.editor_password)
            .await
            .unwrap();
        let viewer = app
            .login(&login.viewer_name, &login.viewer_password)
            .await
            .unwrap();
        let token_of = async |name: &str| {
            let user = app.store.user_by_name(name).await.unwrap().unwrap();
            app.store
                .create_token(user.id, "shares")
                .await
                .unwrap()
                .token
        };
        let editor_token = token_of(&login.editor_name).await;
        let viewer_token = token_of(&login.viewer_name).await;
        let builds = app.store.list_builds().await.unwrap();
        let main = app.store.build_by_slug(&builds[0].slug).await.unwrap();
        let runs = app.store.runs_of_build(main.id, i64::MAX).await.unwrap();
        let demo = Demo {
            editor,
            viewer,
            editor_token,
            viewer_token,
            slug: main.slug,
            build_id: main.id,
            other_name: builds[1].name.clone(),
            runs,
            app,
        };
        for revision in [1, 2] {
            let run = demo.run_of(revision).id.0;
            demo.attach_picture(run).await;
        }
        demo
    }

    /// A run of the main build made on revision `r{number}`.
    fn run_of(&self, number: i64) -> &Run {
        self.runs
            .iter()
            .find(|r| r.revision_number == number)
            .unwrap_or_else(|| panic!("the demo has a run on r{number}"))
    }

    async fn attach_picture(&self, run: i64) {
        let boundary = "shares-test-b0d1";
        let mut png = Vec::new();
        {
            use image::ImageEncoder;
            image::codecs::png::PngEncoder::new(&mut png)
                .write_image(&[90u8; 64], 8, 8, image::ExtendedColorType::L8)
                .unwrap();
        }
        let mut body = format!(
            "--{boundary}\r\nContent-Disposition: form-data; name=\"kind\"\r\n\r\nsetup\r\n\
             --{boundary}\r\nContent-Disposition: form-data; name=\"file\"; filename=\"rig.png\"\r\n\
             Content-Type: image/png\r\n\r\n"
        )
        .into_bytes();
        body.extend(png);
        body.extend(format!("\r\n--{boundary}--\r\n").bytes());
        let page = self
            .app
            .send(
                Request::post(format!(
                    "/builds/{}/runs/{run}/attachments?csrf={}",
                    self.slug, self.editor.csrf
                ))
                .header(header::HOST, HOST)
                .header(header::ORIGIN, ORIGIN)
                .header(header::COOKIE, &self.editor.cookie)
                .header(
                    header::CONTENT_TYPE,
                    format!("multipart/form-data; boundary={boundary}"),
                )
                .body(Body::from(body))
                .unwrap(),
            )
            .await;
        assert_eq!(page.status, StatusCode::SEE_OTHER, "{}", page.body);
    }

    async fn build_page(&self, session: &Session) -> Page {
        self.app
            .get(&format!("/builds/{}", self.slug), Some(session))
            .await
    }

    /// Makes a link with the build page's own form, as the editor would, and returns the page
    /// that shows it and the link's path (`/s/{token}`).
    async fn share_by_form(
        &self,
        label: &str,
        expires_days: &str,
        revision: &str,
    ) -> (Page, String) {
        let build_page = self.build_page(&self.editor).await;
        let form = "#shares form[method=post]";
        let action = build_page
            .attr(form, "action")
            .expect("the build page has a share form");
        assert_eq!(action, format!("/builds/{}/shares", self.slug));
        for field in ["label", "expires_days", "revision", "csrf"] {
            assert_eq!(
                build_page.count(&format!("{form} [name={field}]")),
                1,
                "the share form has {field}"
            );
        }
        let created = self
            .app
            .post_form(
                &action,
                &self.editor,
                &[
                    ("label", label),
                    ("expires_days", expires_days),
                    ("revision", revision),
                ],
            )
            .await;
        assert_eq!(created.status, StatusCode::OK, "{}", created.body);
        let url = created
            .attr("#share-url", "value")
            .expect("the created page shows the link");
        // A copy button for script (hidden until the script shows it) beside a field that
        // can be selected by hand without it.
        assert_eq!(
            created.count("button[data-copy=share-url][hidden]"),
            1,
            "{}",
            created.body
        );
        assert_eq!(created.count("script[src^='/static/copy.'][src$='.js']"), 1);
        let path = url
            .strip_prefix(ORIGIN)
            .unwrap_or_else(|| panic!("{url} is on this site"))
            .to_string();
        (created, path)
    }

    async fn share_in_store(&self, label: &str, expires_at: Option<i64>) -> String {
        let token = random_token();
        self.app
            .store
            .create_share(&NewShare {
                build_id: self.build_id,
                revision_number: None,
                label,
                token_hash: &token_hash(&token),
                created_by: None,
                expires_at,
            })
            .await
            .unwrap();
        format!("/s/{token}")
    }

    async fn bearer(
        &self,
        method: &str,
        path: &str,
        token: &str,
        body: Option<serde_json::Value>,
    ) -> Page {
        let mut request = Request::builder()
            .method(method)
            .uri(path)
            .header(header::HOST, HOST)
            .header(header::AUTHORIZATION, format!("Bearer {token}"));
        let body = match body {
            Some(json) => {
                request = request.header(header::CONTENT_TYPE, "application/json");
                Body::from(json.to_string())
            }
            None => Body::empty(),
        };
        self.app.send(request.body(body).unwrap()).await
    }

    async fn fingerprints(&self) -> Vec<TableFingerprint> {
        self.app
            .store
            .table_fingerprints(&["sessions.last_seen_at", "api_tokens.last_used_at"])
            .await
            .unwrap()
    }

    /// The names pages show for accounts (who made a link, who uploaded a picture).
    async fn account_names(&self) -> Vec<String> {
        let users = self.app.store.list_users().await.unwrap();
        users.into_iter().map(|u| u.display_name).collect()
    }
}

fn token_of(path: &str) -> &str {
    let token = path.strip_prefix("/s/").unwrap().split('/').next().unwrap();
    assert_eq!(token.len(), 64, "{path}");
    token
}

fn header_of<'a>(page: &'a Page, name: &str) -> &'a str {
    page.headers
        .get(name)
        .map(|v| v.to_str().unwrap())
        .unwrap_or("")
}

/// The addresses a page names in the attributes given (links, pictures, stylesheets, forms).
fn addresses_in(page: &Page, attributes: &[&str]) -> Vec<String> {
    let html = page.html();
    let selector = attributes
        .iter()
        .map(|a| format!("[{a}]"))
        .collect::<Vec<_>>()
        .join(", ");
    let selector = scraper::Selector::parse(&selector).unwrap();
    html.select(&selector)
        .flat_map(|e| {
            attributes
                .iter()
                .filter_map(|name| e.value().attr(name).map(str::to_string))
                .collect::<Vec<_>>()
        })
        .collect()
}

fn addresses(page: &Page) -> Vec<String> {
    addresses_in(page, &["href", "src", "action"])
}

/// What every page of a link must be: 200, read-only, about this build only, not indexed, not
/// cached, not leaking its address, loading nothing from elsewhere, linking only within the
/// link. Returns the page's links under the link, to follow them.
async fn assert_read_only_share_page(demo: &Demo, path: &str) -> Vec<String> {
    let page = demo.app.get(path, None).await;
    assert_eq!(page.status, StatusCode::OK, "{path}: {}", page.body);
    assert_eq!(header_of(&page, "referrer-policy"), "no-referrer", "{path}");
    assert!(
        header_of(&page, "x-robots-tag").starts_with("noindex"),
        "{path}"
    );
    assert_eq!(
        header_of(&page, "cache-control"),
        "private, no-store",
        "{path}"
    );
    let html = page.html();
    let forms = scraper::Selector::parse("form").unwrap();
    for form in html.select(&forms) {
        let method = form.value().attr("method").unwrap_or("get");
        assert!(
            method.eq_ignore_ascii_case("get"),
            "{path}: a share page has a form that posts to {:?}",
            form.value().attr("action")
        );
    }
    assert!(
        !page.body.contains("Start a run"),
        "{path}: an edit control"
    );
    assert_eq!(page.count("#start-run, #shares, #history"), 0, "{path}");
    assert!(
        !page.body.contains(&demo.other_name),
        "{path} names the other build"
    );
    let text: String = html.root_element().text().collect();
    for name in demo.account_names().await {
        assert!(!text.contains(&name), "{path} names the account {name:?}");
    }
    let base = format!("/s/{}", token_of(path));
    for address in addresses(&page) {
        assert!(
            !address.contains("//"),
            "{path} loads or links {address} on another site"
        );
        if address.starts_with('#') || address.starts_with("/static/") {
            continue;
        }
        assert!(
            address == base
                || address.starts_with(&format!("{base}/"))
                || address.starts_with(&format!("{base}?")),
            "{path} links {address}, outside the link"
        );
    }
    addresses_in(&page, &["href", "src"])
        .into_iter()
        .filter(|a| a.starts_with(&base))
        .map(|a| a.split('#').next().unwrap_or_default().to_string())
        .collect()
}

/// Checks each page, then every page they link to under the link (which must open for the
/// link and be read-only as well); returns the linked addresses.
async fn assert_pages_and_their_links(demo: &Demo, pages: &[String]) -> Vec<String> {
    let mut linked = Vec::new();
    for path in pages {
        linked.extend(assert_read_only_share_page(demo, path).await);
    }
    linked.sort();
    linked.dedup();
    for path in linked.iter().filter(|p| !pages.contains(p)) {
        let page = demo.app.get(path, None).await;
        assert_eq!(
            page.status,
            StatusCode::OK,
            "{path}, linked from a page of the link"
        );
        let is_html = header_of(&page, "content-type").starts_with("text/html");
        if is_html {
            assert_read_only_share_page(demo, path).await;
        } else {
            assert_eq!(header_of(&page, "referrer-policy"), "no-referrer", "{path}");
            assert_eq!(
                header_of(&page, "cache-control"),
                "private, no-store",
                "{path}"
            );
        }
    }
    linked
}

#[tokio::test]
async fn the_build_page_makes_a_link_and_shows_it_only_once() {
    let demo = Demo::new().await;
    let shares_before = demo.app.count_rows("shares").await;
    let (created, path) = demo.share_by_form("the coil supplier", "30", "").await;
    assert!(
        header_of(&created, "cache-control").contains("no-store"),
        "the page with the link is not cached"
    );
    let token = token_of(&path).to_string();
    assert_eq!(demo.app.count_rows("shares").await, shares_before + 1);

    let build_page = demo.build_page(&demo.editor).await;
    let listed = build_page.select_texts("#share-list li");
    assert_eq!(listed.len(), 1, "{listed:?}");
    assert!(listed[0].contains("the coil supplier") && listed[0].contains("live"));
    assert!(
        !build_page.body.contains(&token),
        "the build page never shows the token again"
    );
    let listed = demo
        .bearer(
            "GET",
            &format!("/api/v1/builds/{}/shares", demo.slug),
            &demo.editor_token,
            None,
        )
        .await;
    assert_eq!(listed.status, StatusCode::OK);
    assert!(!listed.body.contains(&token), "nor does the API list");
    assert!(listed.json()[0].get("url").is_none());
    // The link is recorded (by whom and for whom), not its secret.
    let history = build_page.select_texts("#history li").join("\n");
    assert!(history.contains("made a read-only share link"), "{history}");
    assert!(!history.contains(&token));
}

#[tokio::test]
async fn a_link_reads_every_page_of_its_build_and_changes_nothing() {
    let demo = Demo::new().await;
    let (_, base) = demo.share_by_form("the customer", "7", "").await;
    let run = demo.run_of(2).id.0;
    let pages = [
        base.clone(),
        format!("{base}/revisions/r1"),
        format!("{base}/runs/{run}"),
        format!("{base}/compare?revs=r1,r2"),
        format!("{base}/report"),
    ];
    let before = demo.fingerprints().await;
    let linked = assert_pages_and_their_links(&demo, &pages).await;
    assert!(
        linked.iter().any(|p| p.contains("/attachments/")),
        "the run's picture is served under the link: {linked:?}"
    );
    // The stylesheets load nothing from elsewhere either.
    for sheet in [
        "/static/style.css",
        "/static/compare.css",
        "/static/print.css",
    ] {
        let css = demo.app.get(sheet, None).await;
        assert_eq!(css.status, StatusCode::OK, "{sheet}");
        assert!(!css.body.contains("//"), "{sheet} names another site");
    }
    // Reading changed nothing but the kept digests of runs (a cache the pages fill).
    let after = demo.fingerprints().await;
    let changed: Vec<&str> = after
        .iter()
        .filter(|a| !before.contains(a))
        .map(|a| a.table.as_str())
        .filter(|t| *t != "run_digests")
        .collect();
    assert!(
        changed.is_empty(),
        "reading through a link changed {changed:?}"
    );
}

#[tokio::test]
async fn a_link_to_one_revision_opens_only_that_revision() {
    let demo = Demo::new().await;
    let (_, base) = demo.share_by_form("r2 only", "7", "r2").await;
    let own = demo.run_of(2).id.0;
    let other = demo.run_of(1).id.0;
    assert_pages_and_their_links(
        &demo,
        &[
            base.clone(),
            format!("{base}/runs/{own}"),
            format!("{base}/revisions/r2"),
        ],
    )
    .await;
    let overview = demo.app.get(&base, None).await;
    let run_links: Vec<String> = addresses(&overview)
        .into_iter()
        .filter(|a| a.contains("/runs/"))
        .collect();
    assert!(!run_links.is_empty());
    for link in &run_links {
        let id: i64 = link.rsplit('/').next().unwrap().parse().unwrap();
        let run = demo.runs.iter().find(|r| r.id.0 == id).unwrap();
        assert_eq!(
            run.revision_number, 2,
            "the overview lists run {id} of another revision"
        );
    }
    let other_picture = demo
        .app
        .store
        .attachments_of_run(eddybench::store::RunId(other))
        .await
        .unwrap()[0]
        .id
        .0;
    for path in [
        format!("{base}/runs/{other}"),
        format!("{base}/runs/{other}/attachments/{other_picture}"),
        format!("{base}/runs/{other}/attachments/{other_picture}/thumb"),
        format!("{base}/revisions/r1"),
        format!("{base}/compare?revs=r1,r2"),
    ] {
        let page = demo.app.get(&path, None).await;
        assert_eq!(page.status, StatusCode::NOT_FOUND, "{path}");
    }
    // The report of such a link is its revision's, whatever the address asks for.
    for path in [format!("{base}/report"), format!("{base}/report?rev=r1")] {
        assert_read_only_share_page(&demo, &path).await;
        let report = demo.app.get(&path, None).await;
        let runs: Vec<String> = addresses(&report)
            .into_iter()
            .filter(|a| a.contains("/runs/"))
            .collect();
        assert!(!runs.is_empty(), "{path} lists r2's runs");
        assert!(
            !runs.contains(&format!("{base}/runs/{other}")),
            "{path} lists a run of r1: {runs:?}"
        );
    }
}

#[tokio::test]
async fn a_revoked_link_is_dead_at_the_next_request() {
    let demo = Demo::new().await;
    let (_, base) = demo.share_by_form("for a day", "7", "").await;
    let run = demo.run_of(2).id.0;
    assert_eq!(demo.app.get(&base, None).await.status, StatusCode::OK);
    let build_page = demo.build_page(&demo.editor).await;
    let revoke = build_page
        .attr("#share-list form[method=post]", "action")
        .expect("a live link has a revoke button");
    // The button asks first: it sits behind a question naming the link.
    let question = build_page.select_texts("#share-list details.confirm-revoke form p");
    assert!(
        question[0].starts_with("Revoke the link for for a day?"),
        "{question:?}"
    );
    let done = demo.app.post_form(&revoke, &demo.editor, &[]).await;
    assert_eq!(done.status, StatusCode::SEE_OTHER);
    for path in [
        base.clone(),
        format!("{base}/runs/{run}"),
        format!("{base}/revisions/r1"),
        format!("{base}/report"),
    ] {
        let page = demo.app.get(&path, None).await;
        assert_eq!(page.status, StatusCode::NOT_FOUND, "{path}");
        assert_eq!(header_of(&page, "referrer-policy"), "no-referrer");
        let said = page.select_texts("p.message").join(" ");
        assert!(
            said.starts_with("This read-only link was revoked on "),
            "{path}: {said}"
        );
    }
    let listed = demo
        .build_page(&demo.editor)
        .await
        .select_texts("#share-list li");
    assert!(listed[0].contains("revoked"), "{listed:?}");
}

#[tokio::test]
async fn an_expired_link_opens_nothing_and_no_expiry_in_the_past_is_accepted() {
    let demo = Demo::new().await;
    let expired = demo
        .share_in_store("last week", Some(now_unix_s() - 1))
        .await;
    let live = demo
        .share_in_store("next week", Some(now_unix_s() + 7 * 86_400))
        .await;
    assert_eq!(demo.app.get(&live, None).await.status, StatusCode::OK);
    for path in [expired.clone(), format!("{expired}/report")] {
        let page = demo.app.get(&path, None).await;
        assert_eq!(page.status, StatusCode::NOT_FOUND, "{path}");
        let said = page.select_texts("p.message").join(" ");
        assert!(
            said.starts_with("This read-only link expired on "),
            "{said}"
        );
    }
    let listed = demo
        .build_page(&demo.editor)
        .await
        .select_texts("#share-list li");
    assert!(
        listed
            .iter()
            .any(|l| l.contains("last week") && l.contains("expired"))
    );

    let before = demo.fingerprints().await;
    for days in ["0", "-1", "3651", "soon"] {
        let page = demo
            .app
            .post_form(
                &format!("/builds/{}/shares", demo.slug),
                &demo.editor,
                &[("label", "bad"), ("expires_days", days)],
            )
            .await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{days} days");
    }
    let past = demo
        .bearer(
            "POST",
            &format!("/api/v1/builds/{}/shares", demo.slug),
            &demo.editor_token,
            Some(json!({"label": "bad", "expires_at": "2001-01-01T00:00:00Z"})),
        )
        .await;
    assert_eq!(
        past.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        past.body
    );
    assert_eq!(past.json()["field"], "expires_at");
    assert_eq!(
        before,
        demo.fingerprints().await,
        "a refused link saves nothing"
    );
}

#[tokio::test]
async fn the_api_makes_lists_and_revokes_links() {
    let demo = Demo::new().await;
    let made = demo
        .bearer(
            "POST",
            &format!("/api/v1/builds/{}/shares", demo.slug),
            &demo.editor_token,
            Some(json!({"label": "the lab", "expires_at": "2030-01-01T00:00:00Z"})),
        )
        .await;
    assert_eq!(made.status, StatusCode::CREATED, "{}", made.body);
    assert!(header_of(&made, "cache-control").contains("no-store"));
    let json = made.json();
    let url = json["url"].as_str().expect("the link, this once");
    let path = url.strip_prefix(ORIGIN).expect("on this site").to_string();
    let token = token_of(&path).to_string();
    assert_eq!(json["label"], "the lab");
    assert_eq!(json["live"], true);
    assert_eq!(json["expires_at"], 1_893_456_000);
    let id = json["id"].as_i64().unwrap();
    assert_eq!(demo.app.get(&path, None).await.status, StatusCode::OK);

    let listed = demo
        .bearer(
            "GET",
            &format!("/api/v1/builds/{}/shares", demo.slug),
            &demo.editor_token,
            None,
        )
        .await;
    assert_eq!(listed.status, StatusCode::OK);
    assert!(!listed.body.contains(&token), "{}", listed.body);
    let list = listed.json();
    let line = list
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["id"] == id)
        .expect("the new link is listed");
    assert_eq!(line["label"], "the lab");
    assert!(line.get("url").is_none());

    let gone = demo
        .bearer(
            "DELETE",
            &format!("/api/v1/shares/{id}"),
            &demo.editor_token,
            None,
        )
        .await;
    assert_eq!(gone.status, StatusCode::NO_CONTENT, "{}", gone.body);
    assert_eq!(
        demo.app.get(&path, None).await.status,
        StatusCode::NOT_FOUND
    );
    let listed = demo
        .bearer(
            "GET",
            &format!("/api/v1/builds/{}/shares", demo.slug),
            &demo.editor_token,
            None,
        )
        .await
        .json();
    let line = listed
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["id"] == id)
        .unwrap()
        .clone();
    assert_eq!(line["live"], false);
    assert!(line["revoked_at"].is_i64());
    let unknown = demo
        .bearer("DELETE", "/api/v1/shares/999999", &demo.editor_token, None)
        .await;
    assert_eq!(unknown.status, StatusCode::NOT_FOUND);
}

#[tokio::test]
async fn a_viewer_can_neither_make_nor_revoke_a_link() {
    let demo = Demo::new().await;
    let (_, base) = demo.share_by_form("kept", "7", "").await;
    let id = demo.app.store.shares_of_build(demo.build_id).await.unwrap()[0]
        .id
        .0;
    let viewer_page = demo.build_page(&demo.viewer).await;
    assert_eq!(
        viewer_page.count("#shares, #share-list"),
        0,
        "a viewer sees no link controls"
    );

    let before = demo.fingerprints().await;
    let form = demo
        .app
        .post_form(
            &format!("/builds/{}/shares", demo.slug),
            &demo.viewer,
            &[("label", "mine"), ("expires_days", "7")],
        )
        .await;
    assert_eq!(form.status, StatusCode::FORBIDDEN);
    let revoke = demo
        .app
        .post_form(
            &format!("/builds/{}/shares/{id}/revoke", demo.slug),
            &demo.viewer,
            &[],
        )
        .await;
    assert_eq!(revoke.status, StatusCode::FORBIDDEN);
    let api = demo
        .bearer(
            "POST",
            &format!("/api/v1/builds/{}/shares", demo.slug),
            &demo.viewer_token,
            Some(json!({"label": "mine"})),
        )
        .await;
    assert_eq!(api.status, StatusCode::FORBIDDEN);
    let listed = demo
        .bearer(
            "GET",
            &format!("/api/v1/builds/{}/shares", demo.slug),
            &demo.viewer_token,
            None,
        )
        .await;
    assert_eq!(
        listed.status,
        StatusCode::FORBIDDEN,
        "a viewer does not see the links either"
    );
    let delete = demo
        .bearer(
            "DELETE",
            &format!("/api/v1/shares/{id}"),
            &demo.viewer_token,
            None,
        )
        .await;
    assert_eq!(delete.status, StatusCode::FORBIDDEN);
    assert_eq!(before, demo.fingerprints().await, "nothing was saved");
    assert_eq!(
        demo.app.get(&base, None).await.status,
        StatusCode::OK,
        "the link still works"
    );
}

#[tokio::test]
async fn a_token_lists_the_builds() {
    let demo = Demo::new().await;
    let page = demo
        .bearer("GET", "/api/v1/builds", &demo.viewer_token, None)
        .await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    let builds = page.json();
    let builds = builds.as_array().unwrap();
    let stored = demo.app.store.list_builds().await.unwrap();
    assert_eq!(builds.len(), stored.len());
    for (json, build) in builds.iter().zip(&stored) {
        assert_eq!(json["slug"], build.slug.as_str());
        assert_eq!(json["name"], build.name.as_str());
        assert_eq!(json["runs"], build.run_count);
    }
    assert!(builds.iter().any(|b| b["slug"] == demo.slug.as_str()));
    let anonymous = demo.app.get("/api/v1/builds", None).await;
    assert_eq!(anonymous.status, StatusCode::UNAUTHORIZED);
}
