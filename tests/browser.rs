//! The real browser at phone size: sign in, create a build and a revision, start a run, log
//! readings by tapping, and nothing overflows sideways.

#[path = "common/browser.rs"]
mod browser;
mod common;

use browser::{
    Driver, PHONE_WIDTH, Served, click, click_and_load, fill, horizontal_overflow_px, screenshot,
    texts,
};
use eddybench::secrets::hash_password;
use eddybench::store::UserRole;
use fantoccini::Locator;

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn phone_sign_in_build_revision_and_run() {
    let served = Served::start().await;
    served
        .store
        .create_user(
            "ada",
            "Ada",
            UserRole::Editor,
            &hash_password(common::PASSWORD),
        )
        .await
        .unwrap();
    let driver = Driver::start();
    let profile = tempfile::tempdir().unwrap();
    let client = driver.phone(profile.path()).await;

    client.goto(&served.url("/")).await.unwrap();
    assert!(
        client
            .current_url()
            .await
            .unwrap()
            .path()
            .starts_with("/login")
    );
    let width = client
        .execute("return window.innerWidth;", vec![])
        .await
        .unwrap();
    assert_eq!(
        width.as_u64(),
        Some(u64::from(PHONE_WIDTH)),
        "the viewport is phone-sized"
    );

    fill(&client, "input[name=name]", "ada").await;
    fill(&client, "input[name=password]", common::PASSWORD).await;
    click_and_load(&client, "form[action='/login'] button[type=submit]").await;
    let errors = texts(&client, "p.error").await;
    assert_eq!(texts(&client, "h1").await, vec!["Builds"], "{errors:?}");

    click_and_load(&client, "a[href='/builds/new']").await;
    fill(&client, "input[name=name]", "Phone rig").await;
    fill(&client, "textarea[name=purpose]", "heating small bolts").await;
    click_and_load(&client, "form[action='/builds'] button[type=submit]").await;
    assert_eq!(
        client.current_url().await.unwrap().path(),
        "/builds/phone-rig"
    );

    click_and_load(&client, "a[href='/builds/phone-rig/revisions/new']").await;
    click(&client, "input[name='tank_capacitor.present']").await;
    fill(
        &client,
        "input[name='tank_capacitor.capacitance_f']",
        "330n",
    )
    .await;
    fill(&client, "input[name='tank_capacitor.count']", "six").await;
    click_and_load(
        &client,
        "form[action='/builds/phone-rig/revisions'] button[type=submit]",
    )
    .await;
    // A bad count comes back marked, with the other value kept.
    let invalid = client
        .find(Locator::Css(
            "input[name='tank_capacitor.count'][aria-invalid=true]",
        ))
        .await;
    assert!(invalid.is_ok(), "the bad field is marked");
    fill(&client, "input[name='tank_capacitor.count']", "6").await;
    click_and_load(
        &client,
        "form[action='/builds/phone-rig/revisions'] button[type=submit]",
    )
    .await;
    assert_eq!(
        client.current_url().await.unwrap().path(),
        "/builds/phone-rig/revisions/r1"
    );
    let values = texts(&client, "#parts dd").await;
    assert!(values.contains(&"330 nF".to_string()), "{values:?}");
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the revision page fits the phone"
    );

    client.goto(&served.url("/builds/phone-rig")).await.unwrap();
    click_and_load(&client, "#start-run").await;
    fill(&client, "input[name=supply_setting_v]", "24").await;
    click_and_load(
        &client,
        "form[action='/builds/phone-rig/runs'] button[type=submit]",
    )
    .await;
    let run_path = client.current_url().await.unwrap().path().to_string();
    assert!(
        run_path.starts_with("/builds/phone-rig/runs/"),
        "{run_path}"
    );

    fill(&client, "#v-supply_current", "6.2").await;
    click_and_load(&client, "#entry-supply_current button.add").await;
    fill(&client, "#v-temp\\.tank_capacitor", "38.5").await;
    click_and_load(&client, "[id='entry-temp.tank_capacitor'] button.add").await;
    let values = texts(&client, "table.readings span.value").await;
    assert_eq!(values, vec!["38.5 °C", "6.2 A"], "newest first");
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the run page fits the phone"
    );
    screenshot(&client, "run-page-phone").await;

    client.close().await.unwrap();
}
