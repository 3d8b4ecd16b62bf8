//! `serve` and `demo`: the server's settings and its listening loop.

use std::net::SocketAddr;
use std::path::PathBuf;
use std::sync::Arc;

use anyhow::Context;

use eddybench::config::Config;
use eddybench::store::Store;
use eddybench::{AppState, app};

use super::ServeArgs;

pub fn config_for(serve: &ServeArgs, data_dir: PathBuf) -> Config {
    let mut config = Config::new(data_dir);
    config.secure_cookies = serve.secure_cookies
        || serve
            .public_origin
            .as_deref()
            .is_some_and(|o| o.starts_with("https://"));
    config.public_origin = serve.public_origin.clone();
    config.trust_forwarded = serve.trust_forwarded;
    config
}

pub async fn run_server(
    store: Store,
    config: Config,
    listen: SocketAddr,
    banner: Option<String>,
) -> anyhow::Result<()> {
    let listener = tokio::net::TcpListener::bind(listen)
        .await
        .with_context(|| format!("cannot listen on {listen}"))?;
    let address = listener.local_addr()?;
    let router = app(AppState {
        store,
        config: Arc::new(config),
        run_feeds: Default::default(),
    });
    println!("Eddybench is serving at http://{address}/");
    if let Some(banner) = banner {
        println!("{banner}");
    }
    // axum::serve leaves Nagle's algorithm on; small responses then wait for ACKs.
    let listener = axum::serve::ListenerExt::tap_io(listener, |tcp| {
        let _ = tcp.set_nodelay(true);
    });
    axum::serve(listener, router)
        .with_graceful_shutdown(async {
            let _ = tokio::signal::ctrl_c().await;
        })
        .await?;
    Ok(())
}
