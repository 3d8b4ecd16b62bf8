//! The route table: every route is registered with the least access it allows, so the table
//! the tests walk (every route × every kind of visitor) is the router itself and a new route
//! cannot be left out of it.

use axum::Router;
use axum::handler::Handler;
use axum::http::Method;
use axum::routing::{delete, get, post};

use crate::web::AppState;

/// Who a route is for (the least access that may succeed).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Access {
    /// Anyone: the login page, health, static files, the model (it stores nothing).
    Public,
    /// A valid share link of the build, or any signed-in user.
    Share,
    /// Any signed-in user or API token.
    Viewer,
    /// An editor or admin (writes).
    Editor,
    /// An admin (accounts).
    Admin,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RouteInfo {
    pub method: Method,
    pub path: &'static str,
    pub access: Access,
}

/// An area's routes and their table.
pub struct Routes {
    pub(super) router: Router<AppState>,
    pub(super) table: Vec<RouteInfo>,
}

impl Default for Routes {
    fn default() -> Self {
        Routes::new()
    }
}

impl Routes {
    pub fn new() -> Routes {
        Routes {
            router: Router::new(),
            table: Vec::new(),
        }
    }

    fn record(mut self, method: Method, path: &'static str, access: Access) -> Routes {
        self.table.push(RouteInfo {
            method,
            path,
            access,
        });
        self
    }

    pub fn get<H, T>(self, path: &'static str, access: Access, handler: H) -> Routes
    where
        H: Handler<T, AppState>,
        T: 'static,
    {
        let mut routes = self.record(Method::GET, path, access);
        routes.router = routes.router.route(path, get(handler));
        routes
    }

    pub fn post<H, T>(self, path: &'static str, access: Access, handler: H) -> Routes
    where
        H: Handler<T, AppState>,
        T: 'static,
    {
        let mut routes = self.record(Method::POST, path, access);
        routes.router = routes.router.route(path, post(handler));
        routes
    }

    pub fn delete<H, T>(self, path: &'static str, access: Access, handler: H) -> Routes
    where
        H: Handler<T, AppState>,
        T: 'static,
    {
        let mut routes = self.record(Method::DELETE, path, access);
        routes.router = routes.router.route(path, delete(handler));
        routes
    }

    /// A POST route whose handler carries its own layers (a body limit, say).
    pub fn post_with(
        self,
        path: &'static str,
        access: Access,
        method_router: axum::routing::MethodRouter<AppState>,
    ) -> Routes {
        let mut routes = self.record(Method::POST, path, access);
        routes.router = routes.router.route(path, method_router);
        routes
    }

    pub fn merge(mut self, other: Routes) -> Routes {
        self.router = self.router.merge(other.router);
        self.table.extend(other.table);
        self
    }

    /// Applies a layer to this area's routes only (for example the headers of share pages).
    pub fn layer<L>(mut self, layer: L) -> Routes
    where
        L: tower::Layer<axum::routing::Route> + Clone + Send + Sync + 'static,
        L::Service: tower::Service<axum::extract::Request> + Clone + Send + Sync + 'static,
        <L::Service as tower::Service<axum::extract::Request>>::Response:
            axum::response::IntoResponse + 'static,
        <L::Service as tower::Service<axum::extract::Request>>::Error:
            Into<std::convert::Infallible> + 'static,
        <L::Service as tower::Service<axum::extract::Request>>::Future: Send + 'static,
    {
        self.router = self.router.layer(layer);
        self
    }
}
