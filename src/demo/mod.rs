//! The demo scenario: invented builds, revisions and runs, and the seeding of a fresh store.

use crate::secrets::hash_password;
use crate::store::{Store, UserRole};

/// The accounts `eddybench demo` prints.
pub struct DemoLogin {
    pub editor_name: String,
    pub editor_password: String,
    pub viewer_name: String,
    pub viewer_password: String,
}

/// Seeds the demo accounts (and, once the scenario is in, its builds) into an empty store.
pub async fn seed(store: &Store) -> anyhow::Result<DemoLogin> {
    let login = DemoLogin {
        editor_name: "demo".into(),
        editor_password: "bench-demo-2026".into(),
        viewer_name: "visitor".into(),
        viewer_password: "bench-visitor-2026".into(),
    };
    for (name, display, role, password) in [
        (
            &login.editor_name,
            "Demo editor",
            UserRole::Editor,
            &login.editor_password,
        ),
        (
            &login.viewer_name,
            "Visitor",
            UserRole::Viewer,
            &login.viewer_password,
        ),
    ] {
        if store.user_by_name(name).await?.is_none() {
            let password = password.clone();
            let hash = tokio::task::spawn_blocking(move || hash_password(&password)).await?;
            store.create_user(name, display, role, &hash).await?;
        }
    }
    Ok(login)
}
