//! Pages, the JSON API and their middleware. One folder per resource (its routes, handlers and
//! view types together), each with its own `router()`; `app` merges them. The files at this level
//! are shared by every area: errors, CSRF, security headers, the route table, page chrome.

mod accounts;
pub mod api;
mod attachments;
mod builds;
mod chrome;
pub mod compare;
mod csrf;
mod error;
mod forms;
mod reader;
mod revisions;
mod routes;
mod runs;
mod security;
mod shares;
mod view;

use std::sync::Arc;

use axum::Router;
use axum::extract::{FromRef, State};
use axum::middleware;
use tower_http::services::ServeDir;

use crate::config::Config;
use crate::store::Store;

pub use accounts::session::CurrentUser;
pub use error::{AppError, Result};
use routes::Routes;
pub use routes::{Access, RouteInfo};

/// Everything a handler may need, passed with `State`.
#[derive(Clone)]
pub struct AppState {
    pub store: Store,
    pub config: Arc<Config>,
    /// Changes to open runs, for the run pages' live streams.
    pub run_feeds: crate::run_feed::RunFeeds,
}

impl FromRef<AppState> for Store {
    fn from_ref(state: &AppState) -> Store {
        state.store.clone()
    }
}

/// The largest request body outside the routes that set their own limit.
const REQUEST_BODY_LIMIT_BYTES: usize = 1024 * 1024;

/// Every area's routes, with the access each allows.
fn all_routes() -> Routes {
    Routes::new()
        .merge(accounts::account::router())
        .merge(accounts::auth::router())
        .merge(builds::router())
        .merge(compare::router())
        .merge(revisions::router())
        .merge(runs::router())
        .merge(runs::analysis::router())
        .merge(attachments::router())
        .merge(api::builds::router())
        .merge(api::model::router())
        .merge(api::logbook::router())
        .merge(builds::export::router())
        .merge(shares::router())
        .get("/healthz", Access::Public, healthz)
}

/// The route table (method, path, least access) the router is made of, for the access tests.
pub fn route_table() -> Vec<RouteInfo> {
    all_routes().table
}

/// The whole application: every area's routes behind the middleware stack.
pub fn app(state: AppState) -> Router {
    let static_dir = concat!(env!("CARGO_MANIFEST_DIR"), "/static");
    all_routes()
        .router
        .nest_service("/static", ServeDir::new(static_dir))
        // Forms and JSON bodies; the routes that take more (readings, pictures) set their own.
        .layer(axum::extract::DefaultBodyLimit::max(
            REQUEST_BODY_LIMIT_BYTES,
        ))
        .layer(middleware::from_fn_with_state(state.clone(), csrf::guard))
        .layer(middleware::from_fn_with_state(
            state.clone(),
            accounts::session::load,
        ))
        .layer(middleware::from_fn(error::render))
        .layer(middleware::from_fn_with_state(
            state.clone(),
            security::headers,
        ))
        .layer(tower_http::trace::TraceLayer::new_for_http())
        .with_state(state)
}

/// 200 `ok` once the database is open and migrated (migrations run before the server listens).
async fn healthz(State(store): State<Store>) -> Result<&'static str> {
    store.ping().await?;
    Ok("ok")
}
