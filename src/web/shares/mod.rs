//! Share links: an editor makes a read-only link to a build (or one revision), optionally
//! expiring, labelled with whom it is for; lists and revokes them. The link's pages are the
//! build's own read pages under `/s/{token}` (see `reader.rs`).

use askama::Template;
use askama_web::WebTemplate;
use axum::extract::{Path, State};
use axum::http::{HeaderMap, StatusCode};
use axum::response::{IntoResponse, Redirect, Response};
use axum::{Form, Json};
use serde::{Deserialize, Serialize};

use crate::secrets::{random_token, token_hash};
use crate::store::{Build, NewShare, SessionUser, Share, ShareId, now_unix_s, revision_number};
use crate::web::accounts::session::Editor;
use crate::web::api::ApiJson;
use crate::web::chrome::Chrome;
use crate::web::csrf::expected_origin;
use crate::web::reader::SHARE_PREFIX;
use crate::web::routes::{Access, Routes};
use crate::web::view::date_time;
use crate::web::{AppError, AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .post("/builds/{slug}/shares", Access::Editor, create_form)
        .post(
            "/builds/{slug}/shares/{id}/revoke",
            Access::Editor,
            revoke_form,
        )
        .post("/api/v1/builds/{slug}/shares", Access::Editor, create_api)
        .get("/api/v1/builds/{slug}/shares", Access::Editor, list_api)
        .delete("/api/v1/shares/{id}", Access::Editor, revoke_api)
}

/// Longest life of a link, and of its label.
const MAX_DAYS: i64 = 3650;
const MAX_LABEL_CHARS: usize = 120;

/// A share as the build page lists it.
pub struct ShareLine {
    pub id: i64,
    pub label: String,
    pub scope: String,
    pub created: String,
    pub expires: String,
    pub status: &'static str,
}

pub fn share_lines(shares: &[Share]) -> Vec<ShareLine> {
    let now = now_unix_s();
    shares
        .iter()
        .map(|s| ShareLine {
            id: s.id.0,
            label: s.label.clone(),
            scope: s
                .revision_number
                .map(|n| format!("revision r{n}"))
                .unwrap_or_else(|| "whole build".into()),
            created: format!(
                "{} by {}",
                date_time(s.created_at),
                s.created_by_name.as_deref().unwrap_or("someone")
            ),
            expires: s
                .expires_at
                .map(date_time)
                .unwrap_or_else(|| "never".into()),
            status: if s.revoked_at.is_some() {
                "revoked"
            } else if !s.is_live(now) {
                "expired"
            } else {
                "live"
            },
        })
        .collect()
}

async fn make_share(
    state: &AppState,
    user: &SessionUser,
    build: &Build,
    label: &str,
    revision: Option<i64>,
    expires_at: Option<i64>,
) -> Result<(ShareId, String)> {
    let label = label.trim();
    if label.is_empty() || label.chars().count() > MAX_LABEL_CHARS {
        return Err(AppError::invalid(
            "label",
            "say whom the link is for (up to 120 characters)",
        ));
    }
    if let Some(number) = revision {
        state
            .store
            .revision_by_number(build.id, number)
            .await
            .map_err(|_| AppError::invalid("revision", "no such revision"))?;
    }
    if let Some(at) = expires_at
        && (at <= now_unix_s() || at > now_unix_s() + MAX_DAYS * 86_400)
    {
        return Err(AppError::invalid(
            "expires_at",
            "an expiry in the future, within ten years",
        ));
    }
    let token = random_token();
    let id = state
        .store
        .create_share(&NewShare {
            build_id: build.id,
            revision_number: revision,
            label,
            token_hash: &token_hash(&token),
            created_by: Some(user.user_id),
            expires_at,
        })
        .await?;
    state
        .store
        .audit(
            Some((user.user_id, &user.display_name)),
            Some(build.id),
            "share created",
            &format!("link {id} for {label}"),
            &revision
                .map(|n| format!("revision r{n}"))
                .unwrap_or_default(),
        )
        .await?;
    Ok((id, token))
}

fn share_url(state: &AppState, headers: &HeaderMap, token: &str) -> String {
    format!("{}{SHARE_PREFIX}{token}", expected_origin(state, headers))
}

#[derive(Template, WebTemplate)]
#[template(path = "builds/share_created.html")]
struct CreatedPage {
    chrome: Chrome,
    build: Build,
    url: String,
    label: String,
}

#[derive(Deserialize)]
struct ShareForm {
    label: String,
    #[serde(default)]
    expires_days: String,
    #[serde(default)]
    revision: String,
}

async fn create_form(
    State(state): State<AppState>,
    Editor(user): Editor,
    headers: HeaderMap,
    Path(slug): Path<String>,
    Form(form): Form<ShareForm>,
) -> Result<Response> {
    let build = state.store.build_by_slug(&slug).await?;
    let expires_at = match form.expires_days.trim() {
        "" | "never" => None,
        days => match days.parse::<i64>() {
            Ok(d) if (1..=MAX_DAYS).contains(&d) => Some(now_unix_s() + d * 86_400),
            _ => {
                return Err(AppError::invalid(
                    "expires_days",
                    "choose how long the link lives",
                ));
            }
        },
    };
    let revision = match form.revision.trim() {
        "" => None,
        label => Some(
            revision_number(label)
                .ok_or_else(|| AppError::invalid("revision", "no such revision"))?,
        ),
    };
    let (_, token) = make_share(&state, &user, &build, &form.label, revision, expires_at).await?;
    let page = CreatedPage {
        chrome: Chrome::new(format!("Share {}", build.name), &user),
        url: share_url(&state, &headers, &token),
        label: form.label.trim().to_string(),
        build,
    };
    // The link is shown this once: the page must not be cached anywhere.
    Ok(([(axum::http::header::CACHE_CONTROL, "no-store")], page).into_response())
}

async fn share_of_build(state: &AppState, slug: &str, id: i64) -> Result<(Build, Share)> {
    let build = state.store.build_by_slug(slug).await?;
    let share = state.store.share_by_id(ShareId(id)).await?;
    if share.build_id != build.id {
        return Err(AppError::NotFound);
    }
    Ok((build, share))
}

async fn revoke(state: &AppState, user: &SessionUser, build: &Build, share: &Share) -> Result<()> {
    state.store.revoke_share(share.id).await?;
    state
        .store
        .audit(
            Some((user.user_id, &user.display_name)),
            Some(build.id),
            "share revoked",
            &format!("link {} for {}", share.id, share.label),
            "",
        )
        .await?;
    Ok(())
}

async fn revoke_form(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id)): Path<(String, i64)>,
) -> Result<Response> {
    let (build, share) = share_of_build(&state, &slug, id).await?;
    revoke(&state, &user, &build, &share).await?;
    Ok(Redirect::to(&format!("/builds/{}#shares", build.slug)).into_response())
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ShareRequest {
    label: String,
    /// RFC 3339 (`2027-01-31T00:00:00Z`), or absent for a link that does not expire.
    #[serde(default, with = "time::serde::rfc3339::option")]
    expires_at: Option<time::OffsetDateTime>,
    #[serde(default)]
    revision: Option<String>,
}

#[derive(Serialize)]
struct ShareJson {
    id: i64,
    label: String,
    revision: Option<String>,
    created_at: i64,
    expires_at: Option<i64>,
    revoked_at: Option<i64>,
    live: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    url: Option<String>,
}

fn share_json(share: &Share, url: Option<String>) -> ShareJson {
    ShareJson {
        id: share.id.0,
        label: share.label.clone(),
        revision: share.revision_number.map(|n| format!("r{n}")),
        created_at: share.created_at,
        expires_at: share.expires_at,
        revoked_at: share.revoked_at,
        live: share.is_live(now_unix_s()),
        url,
    }
}

async fn create_api(
    State(state): State<AppState>,
    Editor(user): Editor,
    headers: HeaderMap,
    Path(slug): Path<String>,
    ApiJson(body): ApiJson<ShareRequest>,
) -> Result<Response> {
    let build = state.store.build_by_slug(&slug).await?;
    let revision = match body.revision.as_deref() {
        None => None,
        Some(label) => Some(
            revision_number(label)
                .ok_or_else(|| AppError::invalid("revision", "no such revision"))?,
        ),
    };
    let expires_at = body.expires_at.map(|t| t.unix_timestamp());
    let (id, token) = make_share(&state, &user, &build, &body.label, revision, expires_at).await?;
    let share = state.store.share_by_id(id).await?;
    let json = share_json(&share, Some(share_url(&state, &headers, &token)));
    Ok((
        StatusCode::CREATED,
        [(axum::http::header::CACHE_CONTROL, "no-store")],
        Json(json),
    )
        .into_response())
}

async fn list_api(
    State(state): State<AppState>,
    Editor(_user): Editor,
    Path(slug): Path<String>,
) -> Result<Json<Vec<ShareJson>>> {
    let build = state.store.build_by_slug(&slug).await?;
    let shares = state.store.shares_of_build(build.id).await?;
    Ok(Json(shares.iter().map(|s| share_json(s, None)).collect()))
}

async fn revoke_api(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(id): Path<i64>,
) -> Result<StatusCode> {
    let share = state.store.share_by_id(ShareId(id)).await?;
    let build = state.store.build_by_id(share.build_id).await?;
    revoke(&state, &user, &build, &share).await?;
    Ok(StatusCode::NO_CONTENT)
}
