//! Who may read a build's pages: a signed-in user, or a share link for that build. The same
//! handlers serve `/builds/{slug}/…` and `/s/{token}/…`; the reader says which build it is and
//! how links on the page begin.

use axum::extract::FromRequestParts;
use axum::http::request::Parts;

use crate::secrets::token_hash;
use crate::store::{Build, SessionUser, Share};
use crate::web::accounts::session::CurrentUser;
use crate::web::chrome::Chrome;
use crate::web::{AppError, AppState, Result};

/// The path prefix of share pages.
pub const SHARE_PREFIX: &str = "/s/";

#[derive(Debug, Clone)]
pub enum Reader {
    User(SessionUser),
    Share { token: String, share: Share },
}

impl FromRequestParts<AppState> for Reader {
    type Rejection = AppError;

    async fn from_request_parts(parts: &mut Parts, state: &AppState) -> Result<Self> {
        let path = parts.uri.path();
        if let Some(rest) = path.strip_prefix(SHARE_PREFIX) {
            let token = rest.split('/').next().unwrap_or("").to_string();
            // Tokens are 64 hex characters; anything else is not a link we made.
            if token.len() != 64 || !token.bytes().all(|b| b.is_ascii_hexdigit()) {
                return Err(AppError::NotFound);
            }
            let share = state
                .store
                .live_share(&token_hash(&token))
                .await?
                .ok_or(AppError::NotFound)?;
            return Ok(Reader::Share { token, share });
        }
        let CurrentUser(user) = CurrentUser::from_request_parts(parts, state).await?;
        Ok(Reader::User(user))
    }
}

impl Reader {
    /// The build the page is about: by its slug for a user, the link's own build for a share
    /// (whose path carries the token where a user's carries the slug).
    pub async fn build(&self, state: &AppState, slug: &str) -> Result<Build> {
        match self {
            Reader::User(_) => Ok(state.store.build_by_slug(slug).await?),
            Reader::Share { share, .. } => Ok(state.store.build_by_id(share.build_id).await?),
        }
    }

    /// The revision a share is limited to, if any.
    pub fn only_revision(&self) -> Option<i64> {
        match self {
            Reader::User(_) => None,
            Reader::Share { share, .. } => share.revision_number,
        }
    }

    /// Refuses (as not found) a revision outside a revision share.
    pub fn check_revision(&self, number: i64) -> Result<()> {
        match self.only_revision() {
            Some(only) if only != number => Err(AppError::NotFound),
            _ => Ok(()),
        }
    }

    pub fn is_share(&self) -> bool {
        matches!(self, Reader::Share { .. })
    }

    /// The page frame: links under `/builds/{slug}` for a user, under `/s/{token}` for a share
    /// (with no edit controls and no way to other builds).
    pub fn chrome(&self, title: impl Into<String>, build: &Build) -> Chrome {
        match self {
            Reader::User(user) => {
                let mut chrome = Chrome::new(title, user);
                chrome.base = format!("/builds/{}", build.slug);
                chrome
            }
            Reader::Share { token, .. } => {
                let mut chrome = Chrome::anonymous(title, String::new());
                chrome.base = format!("{SHARE_PREFIX}{token}");
                chrome.shared = true;
                chrome
            }
        }
    }
}
