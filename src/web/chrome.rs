//! What every page shares: the signed-in user, the form token, the page title.

use askama::Template;
use axum::http::StatusCode;

use crate::store::{SessionUser, UserRole};

/// The frame of a page (header, navigation, the form token).
#[derive(Debug, Clone)]
pub struct Chrome {
    pub title: String,
    pub user: Option<SessionUser>,
    pub csrf: String,
    /// Where the build's links begin: `/builds/{slug}`, or `/s/{token}` on a share page.
    pub base: String,
    /// A read-only share page.
    pub shared: bool,
}

impl Chrome {
    pub fn new(title: impl Into<String>, user: &SessionUser) -> Chrome {
        Chrome {
            title: title.into(),
            csrf: user.csrf_token.clone(),
            user: Some(user.clone()),
            base: String::new(),
            shared: false,
        }
    }

    pub fn anonymous(title: impl Into<String>, csrf: String) -> Chrome {
        Chrome {
            title: title.into(),
            user: None,
            csrf,
            base: String::new(),
            shared: false,
        }
    }

    pub fn can_edit(&self) -> bool {
        self.user
            .as_ref()
            .is_some_and(|u| u.role >= UserRole::Editor)
    }
}

#[derive(Template)]
#[template(path = "error.html")]
struct ErrorPage<'a> {
    chrome: Chrome,
    status: u16,
    reason: &'a str,
    message: &'a str,
}

/// The HTML page for an error. It has no user menu: the error renderer does not know the user.
pub fn error_page(status: StatusCode, message: &str) -> String {
    let page = ErrorPage {
        chrome: Chrome::anonymous(status.canonical_reason().unwrap_or("Error"), String::new()),
        status: status.as_u16(),
        reason: status.canonical_reason().unwrap_or("Error"),
        message,
    };
    page.render().unwrap_or_else(|_| message.to_string())
}
