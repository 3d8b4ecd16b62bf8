//! The signed-in user's own account (changing the password ends every other session), and the
//! admin's list of accounts.

use askama::Template;
use askama_web::WebTemplate;
use axum::Form;
use axum::extract::State;
use axum::http::{HeaderMap, StatusCode};
use axum::response::{IntoResponse, Response};
use serde::Deserialize;

use crate::checks;
use crate::secrets::{generate_password, hash_password, token_hash, verify_password};
use crate::store::{User, UserRole};
use crate::web::accounts::session::{Admin, CurrentUser, SESSION_COOKIE, cookie};
use crate::web::chrome::Chrome;
use crate::web::forms::FieldErrors;
use crate::web::routes::{Access, Routes};
use crate::web::{AppError, AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .get("/account/password", Access::Viewer, password_form)
        .post("/account/password", Access::Viewer, change_password)
        .get("/admin/users", Access::Admin, users)
        .post("/admin/users", Access::Admin, add_user)
}

#[derive(Template, WebTemplate)]
#[template(path = "account/password.html")]
struct PasswordPage {
    chrome: Chrome,
    errors: FieldErrors,
    done: bool,
}

async fn password_form(CurrentUser(user): CurrentUser) -> PasswordPage {
    PasswordPage {
        chrome: Chrome::new("Change password", &user),
        errors: FieldErrors::default(),
        done: false,
    }
}

#[derive(Deserialize)]
struct PasswordForm {
    current: String,
    new: String,
    repeat: String,
}

async fn change_password(
    State(state): State<AppState>,
    CurrentUser(user): CurrentUser,
    headers: HeaderMap,
    Form(form): Form<PasswordForm>,
) -> Result<Response> {
    let stored = state
        .store
        .user_by_name(&user.name)
        .await?
        .ok_or(AppError::LoginRequired)?;
    let mut errors = FieldErrors::default();
    let current = form.current.clone();
    let hash = stored.password_hash.clone();
    let verified = tokio::task::spawn_blocking(move || verify_password(&current, &hash))
        .await
        .map_err(|e| AppError::Internal(e.into()))?;
    if !verified {
        errors.add("current", "that is not your current password");
    }
    if let Err(message) = checks::accounts::new_password(&form.new) {
        errors.add("new", message);
    } else if form.new != form.repeat {
        errors.add("repeat", "the two new passwords differ");
    }
    if !errors.is_empty() {
        let page = PasswordPage {
            chrome: Chrome::new("Change password", &user),
            errors,
            done: false,
        };
        return Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response());
    }
    let new = form.new.clone();
    let new_hash = tokio::task::spawn_blocking(move || hash_password(&new))
        .await
        .map_err(|e| AppError::Internal(e.into()))?;
    let keep = cookie(&headers, SESSION_COOKIE)
        .map(|id| token_hash(&id))
        .unwrap_or_default();
    // Every other session of this account ends: a stolen cookie dies with the old password.
    state
        .store
        .change_password(user.user_id, &new_hash, &keep)
        .await?;
    Ok(PasswordPage {
        chrome: Chrome::new("Change password", &user),
        errors: FieldErrors::default(),
        done: true,
    }
    .into_response())
}

#[derive(Template, WebTemplate)]
#[template(path = "account/users.html")]
struct UsersPage {
    chrome: Chrome,
    users: Vec<User>,
    errors: FieldErrors,
    created: Option<(String, String)>,
}

async fn users(State(state): State<AppState>, Admin(user): Admin) -> Result<UsersPage> {
    Ok(UsersPage {
        chrome: Chrome::new("Accounts", &user),
        users: state.store.list_users().await?,
        errors: FieldErrors::default(),
        created: None,
    })
}

#[derive(Deserialize)]
struct NewUserForm {
    name: String,
    #[serde(default)]
    display_name: String,
    role: String,
}

async fn add_user(
    State(state): State<AppState>,
    Admin(admin): Admin,
    Form(form): Form<NewUserForm>,
) -> Result<Response> {
    let mut errors = FieldErrors::default();
    let name = checks::accounts::user_name(&form.name).unwrap_or_else(|message| {
        errors.add("name", message);
        String::new()
    });
    let role = UserRole::parse(&form.role);
    if role.is_none() {
        errors.add("role", "choose viewer, editor or admin");
    }
    let display = checks::accounts::display_name(&form.display_name, &name);
    if let (true, Some(role)) = (errors.is_empty(), role) {
        let password = generate_password();
        let to_hash = password.clone();
        let hash = tokio::task::spawn_blocking(move || hash_password(&to_hash))
            .await
            .map_err(|e| AppError::Internal(e.into()))?;
        match state.store.create_user(&name, &display, role, &hash).await {
            Ok(_) => {
                let page = UsersPage {
                    chrome: Chrome::new("Accounts", &admin),
                    users: state.store.list_users().await?,
                    errors,
                    created: Some((name, password)),
                };
                return Ok(
                    ([(axum::http::header::CACHE_CONTROL, "no-store")], page).into_response()
                );
            }
            Err(crate::store::StoreError::Conflict(message)) => errors.add("name", message),
            Err(other) => return Err(other.into()),
        }
    }
    let page = UsersPage {
        chrome: Chrome::new("Accounts", &admin),
        users: state.store.list_users().await?,
        errors,
        created: None,
    };
    Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response())
}
