//! Every route of the router × every kind of visitor. The routes come from `route_table()`, the
//! table the router itself is made of, so a new route is walked the day it is added, and the walk
//! fails when it meets a path parameter or a request body it has no fixture for.
//!
//! For each route and visitor the test asserts that a visitor below the route's least access
//! never succeeds (no 2xx, no 3xx other than to the sign-in page) and that no refused request
//! changes any table. It prints the matrix: `cargo test --test access_matrix -- --nocapture`.

mod common;

use std::collections::BTreeMap;

use axum::body::Body;
use axum::http::{Method, Request, header};
use common::{HOST, ORIGIN, Page, Session, TestApp};
use eddybench::secrets::{random_token, token_hash};
use eddybench::store::{NewReading, NewRun, NewShare, TableFingerprint, UserRole, now_unix_s};
use eddybench::web::{Access, RouteInfo, route_table};

/// Last-use times any signed-in request may touch; everything else must stay as it was.
const TOUCHED_BY_ANY_REQUEST: [&str; 2] = ["sessions.last_seen_at", "api_tokens.last_used_at"];

// ---- who asks -------------------------------------------------------------------------------

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum ShareKind {
    Valid,
    Revoked,
    Expired,
    OtherBuild,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Principal {
    Anonymous,
    Share(ShareKind),
    Viewer,
    Editor,
    Admin,
    /// An API token of an editor.
    Token,
    /// An editor's API token that has been revoked.
    RevokedToken,
}

/// The columns of the matrix, least privileged first: the walk sends each route's requests in
/// this order, so that the refusals come before any write succeeds.
const PRINCIPALS: [(Principal, &str); 10] = [
    (Principal::Anonymous, "anon"),
    (Principal::Share(ShareKind::Valid), "share"),
    (Principal::Share(ShareKind::Revoked), "sh-rev"),
    (Principal::Share(ShareKind::Expired), "sh-exp"),
    (Principal::Share(ShareKind::OtherBuild), "sh-oth"),
    (Principal::Viewer, "viewer"),
    (Principal::Editor, "editor"),
    (Principal::Admin, "admin"),
    (Principal::Token, "token"),
    (Principal::RevokedToken, "tk-rev"),
];

fn is_share_path(path: &str) -> bool {
    path.starts_with("/s/")
}

/// Path parameters that name an object of the main build (rather than the link's own build).
fn names_an_object(path: &str) -> bool {
    ["{id}", "{reading}", "{attachment}"]
        .iter()
        .any(|p| path.contains(p))
}

/// The most a principal may do on a route. A share is worth something only on the share pages
/// of its own build: a link to the other build may open that build's pages (which carry no id
/// of the main build), never a run or picture of the main build.
fn level(principal: Principal, route: &RouteInfo) -> Access {
    match principal {
        Principal::Anonymous
        | Principal::RevokedToken
        | Principal::Share(ShareKind::Revoked | ShareKind::Expired) => Access::Public,
        Principal::Share(ShareKind::Valid) if is_share_path(route.path) => Access::Share,
        Principal::Share(ShareKind::OtherBuild)
            if is_share_path(route.path) && !names_an_object(route.path) =>
        {
            Access::Share
        }
        Principal::Share(_) => Access::Public,
        Principal::Viewer => Access::Viewer,
        Principal::Editor | Principal::Token => Access::Editor,
        Principal::Admin => Access::Admin,
    }
}

/// Whether the principal must get an answer: at or above the route's access, and on a share
/// page only with a link (a signed-in user reads the build under `/builds/`, not `/s/`).
/// A revoked token is told so even where anyone may go (a script must not carry on as an
/// anonymous visitor), so it is never owed an answer.
fn must_succeed(principal: Principal, route: &RouteInfo) -> bool {
    principal != Principal::RevokedToken
        && level(principal, route) >= route.access
        && (!is_share_path(route.path) || matches!(principal, Principal::Share(_)))
}

// ---- the world the requests are made in -------------------------------------------------------

struct World {
    app: TestApp,
    slug: String,
    build_name: String,
    other_build_name: String,
    run_id: i64,
    reading_id: i64,
    attachment_id: i64,
    /// A link of the main build that the share routes revoke (not one of the principals').
    share_target_id: i64,
    share_tokens: BTreeMap<ShareKind, String>,
    viewer: Session,
    editor: Session,
    admin: Session,
    token: String,
    revoked_token: String,
}

/// A tiny valid PNG, encoded by the image library the server decodes with.
fn tiny_png() -> Vec<u8> {
    use image::ImageEncoder;
    let pixels: Vec<u8> = (0..64).map(|i| (i * 4) as u8).collect();
    let mut out = Vec::new();
    image::codecs::png::PngEncoder::new(&mut out)
        .write_image(&pixels, 8, 8, image::ExtendedColorType::L8)
        .unwrap();
    out
}

const BOUNDARY: &str = "access-matrix-5c2e";

fn multipart(
    fields: &[(&str, &str)],
    file_name: &str,
    content_type: &str,
    bytes: &[u8],
) -> Vec<u8> {
    let mut body = Vec::new();
    for (name, value) in fields {
        body.extend(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"\r\n\r\n{value}\r\n"
            )
            .bytes(),
        );
    }
    body.extend(
        format!(
            "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"file\"; \
             filename=\"{file_name}\"\r\nContent-Type: {content_type}\r\n\r\n"
        )
        .bytes(),
    );
    body.extend_from_slice(bytes);
    body.extend(format!("\r\n--{BOUNDARY}--\r\n").bytes());
    body
}

async fn new_share(
    app: &TestApp,
    build_id: eddybench::store::BuildId,
    label: &str,
    expires_at: Option<i64>,
) -> (i64, String) {
    let token = random_token();
    let id = app
        .store
        .create_share(&NewShare {
            build_id,
            revision_number: None,
            label,
            token_hash: &token_hash(&token),
            created_by: None,
            expires_at,
        })
        .await
        .unwrap();
    (id.0, token)
}

impl World {
    /// The demo builds, an open run of the main build with readings and a picture, the share
    /// links, the signed-in users and the tokens.
    async fn new() -> World {
        let app = TestApp::new().await;
        let login = eddybench::demo::seed(&app.store).await.unwrap();
        let builds = app.store.list_builds().await.unwrap();
        let main = app.store.build_by_slug(&builds[0].slug).await.unwrap();
        let other = app.store.build_by_slug(&builds[1].slug).await.unwrap();
        let editor_user = app
            .store
            .user_by_name(&login.editor_name)
            .await
            .unwrap()
            .unwrap();

        let r1 = app.store.revision_by_number(main.id, 1).await.unwrap();
        let channels: Vec<String> = ["supply_voltage", "supply_current", "frequency"]
            .map(String::from)
            .to_vec();
        let run_id = app
            .store
            .create_run(&NewRun {
                build_id: main.id,
                revision_id: r1.id,
                operator: "Matrix",
                created_by: Some(editor_user.id),
                started_at: None,
                supply_setting_v: Some(24.0),
                supply_current_limit_a: Some(10.0),
                load: "ferrous",
                water_mass_kg: None,
                vessel_heat_capacity_j_per_k: None,
                notes: "",
                channels: &channels,
            })
            .await
            .unwrap();
        let readings: Vec<NewReading> = [(0.0, 24.0, 5.0, 151e3), (30.0, 23.9, 5.2, 150e3)]
            .iter()
            .flat_map(|&(t_s, v, a, f)| {
                [
                    ("supply_voltage", v),
                    ("supply_current", a),
                    ("frequency", f),
                ]
                .map(|(channel, value)| NewReading {
                    t_s,
                    channel: channel.into(),
                    value,
                })
            })
            .collect();
        app.store
            .add_readings(run_id, &readings, Some(editor_user.id))
            .await
            .unwrap();
        let reading_id = app.store.reading_history(run_id).await.unwrap()[0].id.0;

        let viewer = app
            .login(&login.viewer_name, &login.viewer_password)
            .await
            .expect("the demo viewer signs in");
        let editor = app
            .login(&login.editor_name, &login.editor_password)
            .await
            .expect("the demo editor signs in");
        let admin = app.signed_in("matrix-admin", UserRole::Admin).await;
        let token = app
            .store
            .create_token(editor_user.id, "matrix")
            .await
            .unwrap()
            .token;
        let revoked = app
            .store
            .create_token(editor_user.id, "revoked")
            .await
            .unwrap();
        app.store.revoke_token(revoked.id).await.unwrap();

        let mut share_tokens = BTreeMap::new();
        share_tokens.insert(
            ShareKind::Valid,
            new_share(&app, main.id, "valid", None).await.1,
        );
        let (revoked_id, revoked_token) = new_share(&app, main.id, "revoked", None).await;
        app.store
            .revoke_share(eddybench::store::ShareId(revoked_id))
            .await
            .unwrap();
        share_tokens.insert(ShareKind::Revoked, revoked_token);
        // The store takes any expiry; the web refuses one in the past, so this is how a link
        // that has run out looks.
        let expired = new_share(&app, main.id, "expired", Some(now_unix_s() - 60)).await;
        share_tokens.insert(ShareKind::Expired, expired.1);
        let other_share = new_share(&app, other.id, "other build", None).await;
        share_tokens.insert(ShareKind::OtherBuild, other_share.1);
        let share_target_id = new_share(&app, main.id, "to revoke", None).await.0;

        let upload = app
            .send(
                Request::post(format!("/builds/{}/runs/{run_id}/attachments", main.slug))
                    .header(header::HOST, HOST)
                    .header(header::ORIGIN, ORIGIN)
                    .header(header::COOKIE, &editor.cookie)
                    .header("x-csrf-token", &editor.csrf)
                    .header(
                        header::CONTENT_TYPE,
                        format!("multipart/form-data; boundary={BOUNDARY}"),
                    )
                    .body(Body::from(multipart(
                        &[("kind", "setup"), ("caption", "bench")],
                        "bench.png",
                        "image/png",
                        &tiny_png(),
                    )))
                    .unwrap(),
            )
            .await;
        assert_eq!(upload.status.as_u16(), 303, "{}", upload.body);
        let attachment_id = app
            .store
            .attachments_of_run(run_id)
            .await
            .unwrap()
            .first()
            .expect("the picture is saved")
            .id
            .0;

        World {
            slug: main.slug.clone(),
            build_name: main.name.clone(),
            other_build_name: other.name.clone(),
            run_id: run_id.0,
            reading_id,
            attachment_id,
            share_target_id,
            share_tokens,
            viewer,
            editor,
            admin,
            token,
            revoked_token: revoked.token,
            app,
        }
    }

    fn share_token(&self, principal: Principal) -> Option<&str> {
        match principal {
            Principal::Share(kind) => Some(&self.share_tokens[&kind]),
            _ => None,
        }
    }

    async fn fingerprints(&self) -> Vec<TableFingerprint> {
        self.app
            .store
            .table_fingerprints(&TOUCHED_BY_ANY_REQUEST)
            .await
            .unwrap()
    }
}

// ---- filling a route in -----------------------------------------------------------------------

/// The route's address with its parameters filled from the world, or why it cannot be filled.
fn fill(path: &str, world: &World, principal: Principal) -> Result<String, String> {
    let segments: Vec<&str> = path.split('/').collect();
    let mut filled = Vec::with_capacity(segments.len());
    for (i, segment) in segments.iter().enumerate() {
        if !segment.contains('{') {
            filled.push(segment.to_string());
            continue;
        }
        let before = if i > 0 { segments[i - 1] } else { "" };
        let value = match (before, *segment) {
            // On a share page the first segment is the link's token (see reader.rs).
            ("s", "{slug}") if i == 2 => world
                .share_token(principal)
                .unwrap_or(&world.slug)
                .to_string(),
            (_, "{slug}") => world.slug.clone(),
            ("revisions", "{label}") => "r1".into(),
            ("runs", "{id}") => world.run_id.to_string(),
            ("shares", "{id}") => world.share_target_id.to_string(),
            ("readings", "{reading}") => world.reading_id.to_string(),
            ("attachments", "{attachment}") => world.attachment_id.to_string(),
            ("export", "{file}") => "runs.csv".into(),
            _ => {
                return Err(format!(
                    "no fixture for {segment} (after /{before}) in {path}: add one to fill() \
                     so the access matrix walks the new route"
                ));
            }
        };
        filled.push(value);
    }
    let mut address = filled.join("/");
    // A comparison needs two revisions, or it answers with the chooser (422).
    if address.ends_with("/compare") {
        address.push_str("?revs=r1,r2");
    }
    Ok(address)
}

enum Payload {
    None,
    Form(Vec<(&'static str, String)>),
    Json(String),
    Multipart(Vec<u8>),
}

/// A body that the route would accept from someone allowed to use it, so that a refusal in
/// the matrix is about who asks and not about what was sent.
fn payload(route: &RouteInfo) -> Result<Payload, String> {
    if route.method == Method::GET || route.method == Method::DELETE {
        return Ok(Payload::None);
    }
    let form = |fields: &[(&'static str, &str)]| {
        Payload::Form(fields.iter().map(|&(k, v)| (k, v.to_string())).collect())
    };
    let json = |value: serde_json::Value| Payload::Json(value.to_string());
    let parts = serde_json::json!({
        "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6},
        "work_coil": {"inductance_h": 1.2e-6}
    });
    Ok(match route.path {
        "/login" => form(&[("name", "matrix-admin"), ("password", common::PASSWORD)]),
        "/logout" => form(&[]),
        "/builds" => form(&[("name", "Matrix build")]),
        "/builds/{slug}/revisions" => form(&[
            ("from", "r1"),
            ("tank_capacitor.present", "on"),
            ("tank_capacitor.capacitance_f", "330n"),
            ("tank_capacitor.count", "6"),
            ("work_coil.present", "on"),
            ("work_coil.inductance_h", "1.2u"),
        ]),
        "/builds/{slug}/runs" => form(&[
            ("revision", "r1"),
            ("load", "none"),
            ("supply_setting_v", "24"),
            ("channel", "supply_voltage"),
        ]),
        "/builds/{slug}/runs/{id}/readings" => {
            form(&[("channel", "supply_voltage"), ("value", "24.1 V")])
        }
        "/builds/{slug}/runs/{id}/readings/{reading}/correct" => form(&[("value", "24.2")]),
        "/builds/{slug}/runs/{id}/finish" => form(&[("outcome", "completed")]),
        "/builds/{slug}/runs/{id}/attachments" => Payload::Multipart(multipart(
            &[("kind", "scope"), ("caption", "gate")],
            "gate.png",
            "image/png",
            &tiny_png(),
        )),
        "/builds/{slug}/runs/{id}/readings.csv" => Payload::Multipart(multipart(
            &[],
            "readings.csv",
            "text/csv",
            b"t_s,channel,value\n60,supply_voltage,24\n",
        )),
        "/builds/{slug}/shares" => form(&[("label", "matrix"), ("expires_days", "7")]),
        "/builds/{slug}/shares/{id}/revoke" => form(&[]),
        "/api/v1/model" => json(serde_json::json!({
            "parts": parts,
            "operating_point": {"supply_voltage_v": 24}
        })),
        "/api/v1/builds" => json(serde_json::json!({"name": "Matrix API build"})),
        "/api/v1/builds/{slug}/revisions" => json(serde_json::json!({"parts": parts})),
        "/api/v1/builds/{slug}/runs" => json(serde_json::json!({"revision": "r1", "load": "none"})),
        "/api/v1/runs/{id}/readings" => json(serde_json::json!([
            {"t_s": 60, "channel": "supply_voltage", "value": 24.0}
        ])),
        "/api/v1/runs/{id}/finish" => json(serde_json::json!({"outcome": "completed"})),
        "/api/v1/builds/{slug}/shares" => json(serde_json::json!({"label": "matrix"})),
        _ => {
            return Err(format!(
                "no request body for {} {}: add one to payload() (one the route accepts) so \
                 the access matrix proves who may use it",
                route.method, route.path
            ));
        }
    })
}

/// The request a principal sends: browsers with their cookie, this site's Origin and the form
/// token; scripts with their token; anonymous visitors and links with nothing (no Origin
/// either, so that the form-token check lets them through to the handler's own check).
fn request(
    route: &RouteInfo,
    address: &str,
    payload: &Payload,
    world: &World,
    principal: Principal,
) -> Request<Body> {
    let mut builder = Request::builder()
        .method(route.method.clone())
        .uri(address)
        .header(header::HOST, HOST);
    let session = match principal {
        Principal::Viewer => Some(&world.viewer),
        Principal::Editor => Some(&world.editor),
        Principal::Admin => Some(&world.admin),
        _ => None,
    };
    if let Some(session) = session {
        builder = builder
            .header(header::COOKIE, &session.cookie)
            .header(header::ORIGIN, ORIGIN)
            .header("x-csrf-token", &session.csrf);
    }
    let bearer = match principal {
        Principal::Token => Some(&world.token),
        Principal::RevokedToken => Some(&world.revoked_token),
        _ => None,
    };
    if let Some(token) = bearer {
        builder = builder.header(header::AUTHORIZATION, format!("Bearer {token}"));
    }
    let body = match payload {
        Payload::None => Body::empty(),
        Payload::Form(fields) => {
            builder = builder.header(header::CONTENT_TYPE, "application/x-www-form-urlencoded");
            let mut all: Vec<(&str, &str)> = fields.iter().map(|(k, v)| (*k, v.as_str())).collect();
            if let Some(session) = session {
                all.push(("csrf", &session.csrf));
            }
            Body::from(common::form_body(&all))
        }
        Payload::Json(text) => {
            builder = builder.header(header::CONTENT_TYPE, "application/json");
            Body::from(text.clone())
        }
        Payload::Multipart(bytes) => {
            builder = builder.header(
                header::CONTENT_TYPE,
                format!("multipart/form-data; boundary={BOUNDARY}"),
            );
            Body::from(bytes.clone())
        }
    };
    builder.body(body).unwrap()
}

// ---- judging the answers ----------------------------------------------------------------------

fn to_login(page: &Page) -> bool {
    page.status.is_redirection() && page.location().starts_with("/login")
}

/// Success as an attacker would count it: a 2xx, or a redirect anywhere but the sign-in page.
fn succeeded(page: &Page) -> bool {
    page.status.is_success() || (page.status.is_redirection() && !to_login(page))
}

/// Answered as the route means to answer (for the visitors who must get through): not an error
/// and not sent to sign in (signing out does end on the sign-in page).
fn answered(page: &Page) -> bool {
    page.status.as_u16() < 400 && !page.location().starts_with("/login?next=")
}

fn cell(page: &Page) -> String {
    let code = page.status.as_u16().to_string();
    if to_login(page) {
        format!("{code}>L")
    } else {
        code
    }
}

fn changed(before: &[TableFingerprint], after: &[TableFingerprint]) -> Vec<String> {
    let mut tables: Vec<String> = after
        .iter()
        .filter(|a| !before.contains(a))
        .map(|a| {
            let rows_before = before
                .iter()
                .find(|b| b.table == a.table)
                .map_or(0, |b| b.rows);
            format!("{} ({} → {} rows)", a.table, rows_before, a.rows)
        })
        .collect();
    tables.extend(
        before
            .iter()
            .filter(|b| !after.iter().any(|a| a.table == b.table))
            .map(|b| format!("{} (gone)", b.table)),
    );
    tables
}

struct Row {
    route: String,
    access: Access,
    cells: Vec<String>,
}

/// Walks one route for every principal in a world and returns the printed row; failures are
/// collected rather than panicking at the first, so one run shows every hole.
async fn walk(route: &RouteInfo, world: &World, failures: &mut Vec<String>) -> Row {
    let label = format!("{} {}", route.method, route.path);
    let payload = match payload(route) {
        Ok(payload) => payload,
        Err(why) => {
            failures.push(why);
            return Row {
                route: label,
                access: route.access,
                cells: vec!["?".into(); PRINCIPALS.len()],
            };
        }
    };
    let mut cells = Vec::new();
    let mut first_allowed_write_done = false;
    let mut before = world.fingerprints().await;
    for (principal, name) in PRINCIPALS {
        let address = match fill(route.path, world, principal) {
            Ok(address) => address,
            Err(why) => {
                failures.push(why);
                cells.push("?".into());
                continue;
            }
        };
        let page = world
            .app
            .send(request(route, &address, &payload, world, principal))
            .await;
        let after = world.fingerprints().await;
        let who = format!("{label} as {name} ({address})");
        if level(principal, route) < route.access && succeeded(&page) {
            failures.push(format!(
                "{who}: a {:?} route answered {} {} to a visitor below it",
                route.access,
                page.status,
                page.location()
            ));
        }
        let refused = !answered(&page);
        // A failed sign-in is counted by design (that is the throttle).
        let changes: Vec<String> = changed(&before, &after)
            .into_iter()
            .filter(|t| !(route.path == "/login" && t.starts_with("login_failures ")))
            .collect();
        if refused && !changes.is_empty() {
            failures.push(format!(
                "{who}: refused with {} yet changed {}",
                page.status,
                changes.join(", ")
            ));
        }
        if must_succeed(principal, route) {
            // Reads must answer everyone allowed; a write must answer the first allowed visitor
            // (the next ones may find the run already finished, say).
            let must_answer = route.method == Method::GET || !first_allowed_write_done;
            if must_answer && !answered(&page) {
                failures.push(format!(
                    "{who}: allowed, yet answered {} {} {}",
                    page.status,
                    page.location(),
                    page.body.chars().take(300).collect::<String>()
                ));
            }
            first_allowed_write_done = true;
        }
        // Whatever a link opens, it never shows the other build.
        if let Principal::Share(kind) = principal
            && succeeded(&page)
        {
            let foreign = match kind {
                ShareKind::OtherBuild => &world.build_name,
                _ => &world.other_build_name,
            };
            if page.body.contains(foreign.as_str()) {
                failures.push(format!("{who}: a share page shows the build {foreign:?}"));
            }
        }
        cells.push(cell(&page));
        before = after;
    }
    Row {
        route: label,
        access: route.access,
        cells,
    }
}

fn print_matrix(rows: &[Row]) {
    let route_width = rows
        .iter()
        .map(|r| r.route.chars().count())
        .max()
        .unwrap_or(5);
    let widths: Vec<usize> = PRINCIPALS
        .iter()
        .enumerate()
        .map(|(i, (_, name))| {
            rows.iter()
                .map(|r| r.cells[i].len())
                .chain([name.len()])
                .max()
                .unwrap_or(3)
        })
        .collect();
    let mut header = format!("{:route_width$}  {:6}", "route", "access");
    for ((_, name), width) in PRINCIPALS.iter().zip(&widths) {
        header.push_str(&format!("  {name:>width$}"));
    }
    println!("\n{header}\n{}", "-".repeat(header.chars().count()));
    for row in rows {
        let mut line = format!(
            "{:route_width$}  {:6}",
            row.route,
            format!("{:?}", row.access)
        );
        for (text, width) in row.cells.iter().zip(&widths) {
            line.push_str(&format!("  {text:>width$}"));
        }
        println!("{line}");
    }
    println!(
        "\n>L: a redirect to the sign-in page. share = a live link of the build; sh-rev, sh-exp: \
         revoked and expired links; sh-oth: a link of the other build; token, tk-rev: an \
         editor's API token, live and revoked."
    );
}

// ---- the tests --------------------------------------------------------------------------------

#[tokio::test]
async fn every_route_refuses_every_visitor_below_its_access() {
    let table = route_table();
    assert!(table.len() > 40, "the route table is the router");
    let mut failures = Vec::new();
    let mut rows = Vec::new();
    // Reads share one world; every write gets a fresh one, so that one route's writes (a run
    // finished, a session ended) never decide another route's answers.
    let reads = World::new().await;
    for route in &table {
        let row = if route.method == Method::GET {
            walk(route, &reads, &mut failures).await
        } else {
            walk(route, &World::new().await, &mut failures).await
        };
        rows.push(row);
    }
    print_matrix(&rows);
    assert!(
        failures.is_empty(),
        "{} problems:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[tokio::test]
async fn share_pages_are_the_share_routes() {
    for route in route_table() {
        assert_eq!(
            is_share_path(route.path),
            route.access == Access::Share,
            "{} {}: a share link can only reach /s/ pages, and every /s/ page is for links",
            route.method,
            route.path
        );
        if is_share_path(route.path) {
            assert_eq!(route.method, Method::GET, "{}: links only read", route.path);
        }
    }
}

#[tokio::test]
async fn a_route_whose_parameters_have_no_fixture_fails_the_walk() {
    let world = World::new().await;
    let unknown = fill("/builds/{slug}/coils/{coil}", &world, Principal::Editor);
    assert!(unknown.is_err_and(|why| why.contains("{coil}")));
    let new_write = RouteInfo {
        method: Method::POST,
        path: "/builds/{slug}/coils",
        access: Access::Editor,
    };
    assert!(payload(&new_write).is_err());
    // Every route of today's table is filled.
    for route in route_table() {
        for (principal, _) in PRINCIPALS {
            fill(route.path, &world, principal).unwrap();
        }
        payload(&route).unwrap();
    }
}
