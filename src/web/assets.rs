//! The stylesheets and scripts, embedded in the binary: a copied or installed binary serves
//! them wherever it runs. Each is served under a name carrying a hash of its content
//! (`style.3f2a9c01d4e5.css`), cached by browsers for a year as immutable: a changed file gets a
//! new name, so no one keeps a stale copy. The plain name is still answered, revalidated each
//! time, for links kept from an older page.

use std::sync::LazyLock;

use axum::extract::Path;
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use sha2::{Digest, Sha256};

/// One embedded file.
struct Asset {
    name: &'static str,
    content_type: &'static str,
    bytes: &'static [u8],
}

macro_rules! asset {
    ($name:literal, $content_type:literal) => {
        Asset {
            name: $name,
            content_type: $content_type,
            bytes: include_bytes!(concat!(env!("CARGO_MANIFEST_DIR"), "/static/", $name)),
        }
    };
}

const ASSETS: &[Asset] = &[
    asset!("style.css", "text/css; charset=utf-8"),
    asset!("print.css", "text/css; charset=utf-8"),
    asset!("compare.css", "text/css; charset=utf-8"),
    asset!("run_page.css", "text/css; charset=utf-8"),
    asset!("run_page.js", "text/javascript; charset=utf-8"),
    asset!("charts.js", "text/javascript; charset=utf-8"),
    asset!("copy.js", "text/javascript; charset=utf-8"),
];

/// Hex digits of the content hash in a versioned name: 48 bits tell a changed file apart.
const HASH_DIGITS: usize = 12;

/// An asset with its versioned name and validator, made once at start.
struct Versioned {
    asset: &'static Asset,
    versioned_name: String,
    etag: HeaderValue,
}

static VERSIONED: LazyLock<Vec<Versioned>> = LazyLock::new(|| {
    ASSETS
        .iter()
        .map(|asset| {
            let hash = hex::encode(Sha256::digest(asset.bytes));
            let hash = &hash[..HASH_DIGITS];
            let (stem, extension) = asset
                .name
                .rsplit_once('.')
                .expect("every asset name has an extension");
            Versioned {
                asset,
                versioned_name: format!("{stem}.{hash}.{extension}"),
                etag: HeaderValue::try_from(format!("\"{hash}\""))
                    .expect("hex is a valid header value"),
            }
        })
        .collect()
});

/// The URL a page links `name` by (`/static/style.<hash>.css`). Names are the files of
/// `static/`; an unknown one is a programming error caught by the page tests.
pub fn url(name: &str) -> String {
    let versioned = VERSIONED
        .iter()
        .find(|v| v.asset.name == name)
        .unwrap_or_else(|| panic!("no embedded asset {name}"));
    format!("/static/{}", versioned.versioned_name)
}

/// A year: the longest lifetime caches commonly honour (RFC 9111 leaves it to them).
const IMMUTABLE: &str = "public, max-age=31536000, immutable";
/// The plain name may change content: caches ask again each time (304 when unchanged).
const REVALIDATE: &str = "public, no-cache";

/// `GET /static/{file}`: a versioned name for a year, a plain one revalidated.
pub async fn serve(Path(file): Path<String>, request: HeaderMap) -> Response {
    let found = VERSIONED.iter().find_map(|v| {
        if v.versioned_name == file {
            Some((v, IMMUTABLE))
        } else if v.asset.name == file {
            Some((v, REVALIDATE))
        } else {
            None
        }
    });
    let Some((versioned, cache_control)) = found else {
        return StatusCode::NOT_FOUND.into_response();
    };
    let headers = [
        (
            header::CACHE_CONTROL,
            HeaderValue::from_static(cache_control),
        ),
        (header::ETAG, versioned.etag.clone()),
    ];
    let unchanged = request
        .get_all(header::IF_NONE_MATCH)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .any(|tag| tag.trim() == "*" || tag.trim() == versioned.etag);
    if unchanged {
        return (StatusCode::NOT_MODIFIED, headers).into_response();
    }
    (
        headers,
        [(
            header::CONTENT_TYPE,
            HeaderValue::from_static(versioned.asset.content_type),
        )],
        versioned.asset.bytes,
    )
        .into_response()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn versioned_names_carry_the_content_hash() {
        let url = url("style.css");
        let hash = &hex::encode(Sha256::digest(ASSETS[0].bytes))[..HASH_DIGITS];
        assert_eq!(url, format!("/static/style.{hash}.css"));
    }

    #[test]
    fn every_file_of_the_static_folder_is_embedded() {
        let folder = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("static");
        for entry in std::fs::read_dir(folder).unwrap() {
            let name = entry.unwrap().file_name().into_string().unwrap();
            assert!(
                ASSETS.iter().any(|a| a.name == name),
                "static/{name} is not embedded"
            );
        }
    }
}
