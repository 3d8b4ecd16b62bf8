//! The real browser at phone size: sign in, create a build and a revision, start a run, log
//! readings by tapping, and nothing overflows sideways.

#[path = "common/browser.rs"]
mod browser;
mod common;

use browser::{
    Driver, PHONE_WIDTH, Served, click, click_and_load, fill, horizontal_overflow_px, screenshot,
    texts, wait_for_texts,
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

    // One set, one tap: the page stays, the readings come back over the live stream.
    fill(&client, "#v-supply_current", "6.2").await;
    fill(&client, "#v-temp\\.tank_capacitor", "38.5").await;
    click(&client, "#entry-set button.log").await;
    let values = wait_for_texts(&client, "table.readings span.value", 10, |v| v.len() == 2).await;
    assert_eq!(values, vec!["38.5 °C", "6.2 A"], "newest first");
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the run page fits the phone"
    );
    screenshot(&client, "run-page-phone").await;

    client.close().await.unwrap();
}

/// The bench flow on the demo data: one tap starts a run pre-filled from the last run of the
/// revision, readings go in by tapping Add, a reload loses nothing, finishing shows the analysis.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn phone_logs_a_whole_run_at_the_bench() {
    let served = Served::start().await;
    eddybench::demo::seed(&served.store).await.unwrap();
    let driver = Driver::start();
    let profile = tempfile::tempdir().unwrap();
    let client = driver.phone(profile.path()).await;

    client.goto(&served.url("/login")).await.unwrap();
    fill(&client, "input[name=name]", "demo").await;
    fill(&client, "input[name=password]", "bench-demo-2026").await;
    click_and_load(&client, "form[action='/login'] button[type=submit]").await;
    client
        .goto(&served.url("/builds/tool-room-heater"))
        .await
        .unwrap();
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the build page fits the phone"
    );
    screenshot(&client, "build-page-top-phone").await;

    click_and_load(&client, "#start-run").await;
    // Pre-filled from the latest run of r4 (36 V, idle).
    let supply = client
        .find(Locator::Css("input[name=supply_setting_v]"))
        .await
        .unwrap();
    assert_eq!(supply.prop("value").await.unwrap().as_deref(), Some("36"));
    let checked = client
        .find_all(Locator::Css("input[name=channel]:checked"))
        .await
        .unwrap()
        .len();
    assert!(
        checked >= 4,
        "the channels of the last run are ticked ({checked})"
    );
    click_and_load(
        &client,
        "form[action='/builds/tool-room-heater/runs'] button[type=submit]",
    )
    .await;
    let run_path = client.current_url().await.unwrap().path().to_string();

    fill(&client, "#v-supply_current", "3.1").await;
    fill(&client, "#v-frequency", "104.2k").await;
    click(&client, "#entry-set button.log").await;
    wait_for_texts(&client, "#entry-confirm", 10, |t| {
        t.concat().starts_with("logged 2")
    })
    .await;
    // A reading written down earlier goes in with its time.
    fill(&client, "#v-supply_voltage", "35.8").await;
    click(&client, "#entry-set details.set-time summary").await;
    fill(&client, "#entry-set input[name=time]", "0:05").await;
    click(&client, "#entry-set button.log").await;
    wait_for_texts(&client, "table.readings span.value", 10, |v| v.len() == 3).await;

    client.refresh().await.unwrap();
    let values = texts(&client, "table.readings span.value").await;
    assert_eq!(values.len(), 3, "a reload loses nothing: {values:?}");
    assert!(values.contains(&"104 kHz".to_string()), "{values:?}");
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the open run fits the phone"
    );
    screenshot(&client, "open-run-phone").await;

    client
        .find(Locator::Css("select[name=outcome]"))
        .await
        .unwrap()
        .select_by_value("stopped")
        .await
        .unwrap();
    fill(
        &client,
        "textarea[name=note]",
        "checking the new thermocouples",
    )
    .await;
    click_and_load(&client, "#finish button[type=submit]").await;
    assert_eq!(client.current_url().await.unwrap().path(), run_path);
    let outcome = texts(&client, "#outcome").await.join(" ");
    assert!(outcome.contains("Stopped early"), "{outcome}");
    assert!(
        !texts(&client, "#operating dd").await.is_empty(),
        "the analysis shows the operating point"
    );
    assert_eq!(
        client
            .find_all(Locator::Css("form#entry-set"))
            .await
            .unwrap()
            .len(),
        0,
        "no more entry once finished"
    );
    screenshot(&client, "finished-run-phone").await;
    client.close().await.unwrap();
}
