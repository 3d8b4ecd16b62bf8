//! Rendered pages kept in memory and served with an ETag until what they show changes, so a
//! team reloading the same build page costs about what the same bytes from a file cost.
//!
//! An entry is keyed by the page and the person (a page carries its viewer's name and form
//! token) and holds the validator it was rendered at: a cheap summary of the build read from
//! the store on every request (`Store::build_validator`). A write to the build changes the
//! validator, and the next request renders afresh.

use std::collections::HashMap;
use std::sync::{Arc, Mutex};

use axum::body::Bytes;
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use sha2::{Digest, Sha256};

/// Pages kept at most; when full the cache starts again empty (simple, and bounded memory:
/// a few hundred pages of at most a few hundred KB).
const MAX_PAGES: usize = 256;

#[derive(Clone, Default)]
pub struct PageCache {
    pages: Arc<Mutex<HashMap<[u8; 32], CachedPage>>>,
}

impl std::fmt::Debug for PageCache {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("PageCache").finish_non_exhaustive()
    }
}

#[derive(Clone)]
struct CachedPage {
    validator: String,
    etag: HeaderValue,
    body: Bytes,
}

/// The cache key of a page for a viewer: a hash, so no session or share secret is kept.
pub fn page_key(page: &str, viewer: &str) -> [u8; 32] {
    let mut hasher = Sha256::new();
    hasher.update(page.as_bytes());
    hasher.update([0]);
    hasher.update(viewer.as_bytes());
    hasher.finalize().into()
}

impl PageCache {
    /// The kept page when it was rendered at `validator`: 304 when the client holds it already.
    pub fn answer(&self, key: &[u8; 32], validator: &str, request: &HeaderMap) -> Option<Response> {
        let page = self
            .pages
            .lock()
            .expect("the page cache lock is never poisoned")
            .get(key)
            .filter(|p| p.validator == validator)
            .cloned()?;
        Some(respond(page, request))
    }

    /// Keeps a freshly rendered page and answers with it.
    pub fn keep(
        &self,
        key: [u8; 32],
        validator: String,
        html: String,
        request: &HeaderMap,
    ) -> Response {
        let etag = format!(
            "\"{}\"",
            hex::encode(&Sha256::digest(html.as_bytes())[..16])
        );
        let page = CachedPage {
            validator,
            etag: HeaderValue::try_from(etag).expect("hex is a valid header value"),
            body: Bytes::from(html),
        };
        let mut pages = self
            .pages
            .lock()
            .expect("the page cache lock is never poisoned");
        if pages.len() >= MAX_PAGES {
            pages.clear();
        }
        pages.insert(key, page.clone());
        drop(pages);
        respond(page, request)
    }
}

fn respond(page: CachedPage, request: &HeaderMap) -> Response {
    let unchanged = request
        .get_all(header::IF_NONE_MATCH)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .any(|tag| tag.trim() == page.etag);
    if unchanged {
        return (StatusCode::NOT_MODIFIED, [(header::ETAG, page.etag)]).into_response();
    }
    (
        [
            (header::ETAG, page.etag),
            (
                header::CONTENT_TYPE,
                HeaderValue::from_static("text/html; charset=utf-8"),
            ),
        ],
        page.body,
    )
        .into_response()
}
