//! Pages, the JSON API and their middleware. Each area has its own `router()`; `app` merges them.

mod api;
mod auth;
mod build_view;
mod builds;
mod chrome;
pub mod compare;
mod csrf;
mod digests;
mod error;
mod forms;
pub mod model_api;
mod model_panel;
mod revisions;
mod run_analysis;
mod run_view;
mod runs;
mod security;
mod session;
mod view;

use std::sync::Arc;

use axum::Router;
use axum::extract::{FromRef, State};
use axum::middleware;
use axum::routing::get;
use tower_http::services::ServeDir;

use crate::config::Config;
use crate::store::Store;

pub use error::{AppError, Result};
pub use session::CurrentUser;

/// Everything a handler may need, passed with `State`.
#[derive(Clone)]
pub struct AppState {
    pub store: Store,
    pub config: Arc<Config>,
}

impl FromRef<AppState> for Store {
    fn from_ref(state: &AppState) -> Store {
        state.store.clone()
    }
}

/// The whole application: every area's routes behind the middleware stack.
pub fn app(state: AppState) -> Router {
    let static_dir = concat!(env!("CARGO_MANIFEST_DIR"), "/static");
    Router::new()
        .merge(auth::router())
        .merge(builds::router())
        .merge(compare::router())
        .merge(revisions::router())
        .merge(runs::router())
        .merge(run_analysis::router())
        .merge(api::router())
        .merge(model_api::router())
        .route("/healthz", get(healthz))
        .nest_service("/static", ServeDir::new(static_dir))
        .layer(middleware::from_fn_with_state(state.clone(), csrf::guard))
        .layer(middleware::from_fn_with_state(state.clone(), session::load))
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
