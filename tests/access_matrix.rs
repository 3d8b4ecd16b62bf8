//! Every route of the router × every kind of visitor. The routes come from `route_table()`, the
//! table the router itself is made of, so a new route is walked the day it is added, and the walk
//! fails when it meets a path parameter or a request body it has no fixture for.
//!
//! For each route and visitor the test asserts that a visitor below the route's least access
//! never succeeds (no 2xx, no 3xx other than to the sign-in page) and that no refused request
//! changes any table. It prints the matrix: `cargo test --test access_matrix -- --nocapture`.

mod access;
mod common;

use access::{PRINCIPALS, Principal, ShareKind, World, fill, is_share_path, payload, request};
use axum::http::{Method, StatusCode, header};
use common::{ORIGIN, Page};
use eddybench::store::TableFingerprint;
use eddybench::web::{Access, RouteInfo, route_table};

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
        Principal::Viewer | Principal::ViewerToken => Access::Viewer,
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
         revoked and expired links; sh-oth: a link of the other build; tok-v: a viewer's API \
         token; token, tk-rev: an editor's API token, live and revoked."
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

/// A page of another site, or a stale one, posting with the editor's cookie: every write
/// refuses it before its handler runs (400) and nothing is saved, whoever the route is for.
#[tokio::test]
async fn every_write_refuses_a_forged_browser_request() {
    let world = World::new().await;
    let mut failures = Vec::new();
    let mut before = world.fingerprints().await;
    let writes = route_table()
        .into_iter()
        .filter(|r| r.method != Method::GET);
    for route in writes {
        let address = fill(route.path, &world, Principal::Editor).unwrap();
        let body = payload(&route).unwrap();
        for (what, origin, token) in [
            (
                "from another site",
                Some("http://evil.test"),
                Some(&world.editor.csrf),
            ),
            ("without the form token", Some(ORIGIN), None),
            (
                "with another session's token",
                Some(ORIGIN),
                Some(&world.viewer.csrf),
            ),
            (
                "with neither Origin nor Referer",
                None,
                Some(&world.editor.csrf),
            ),
        ] {
            // The anonymous request carries no credentials; add the browser's.
            let mut forged = request(&route, &address, &body, &world, Principal::Anonymous);
            let headers = forged.headers_mut();
            headers.insert(header::COOKIE, world.editor.cookie.parse().unwrap());
            if let Some(origin) = origin {
                headers.insert(header::ORIGIN, origin.parse().unwrap());
            }
            if let Some(token) = token {
                headers.insert("x-csrf-token", token.parse().unwrap());
            }
            let page = world.app.send(forged).await;
            let after = world.fingerprints().await;
            let who = format!("{} {address} {what}", route.method);
            if page.status != StatusCode::BAD_REQUEST {
                failures.push(format!("{who}: {} instead of 400", page.status));
            }
            let changes = changed(&before, &after);
            if !changes.is_empty() {
                failures.push(format!("{who}: changed {}", changes.join(", ")));
            }
            before = after;
        }
    }
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
/// The snapshot the walk compares sees a change of one value, not only of a row count.
#[tokio::test]
async fn the_snapshot_sees_an_updated_value() {
    let world = World::new().await;
    let before = world.fingerprints().await;
    assert_eq!(
        before,
        world.fingerprints().await,
        "reading changes nothing"
    );
    let finish = eddybench::store::RunFinish {
        by: None,
        outcome: eddybench::store::Outcome::Completed,
        failed_part: None,
        note: "",
        finished_at: None,
    };
    world
        .app
        .store
        .finish_run(eddybench::store::RunId(world.run_id), &finish)
        .await
        .unwrap();
    let changes = changed(&before, &world.fingerprints().await);
    assert!(
        changes.iter().any(|c| c.starts_with("runs (")),
        "{changes:?}"
    );
}
