//! At phone size (390×844): a wild reading logged on a run is voided with a reason from the run
//! page; it stays in the table struck through with the reason, leaves the count, and the build
//! page still loads and fits.

#[path = "common/browser.rs"]
mod browser;
mod common;

use browser::{
    Driver, Served, click, click_and_load, fill, horizontal_overflow_px, screenshot, texts,
};
use eddybench::store::{NewReading, RunId};

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn phone_voids_a_wrong_reading_and_the_pages_recover() {
    let served = Served::start().await;
    eddybench::demo::seed(&served.store).await.unwrap();
    let build = served
        .store
        .build_by_slug("tool-room-heater")
        .await
        .unwrap();
    let run = served.store.runs_of_build(build.id, 1).await.unwrap()[0].clone();
    let latest_s = served
        .store
        .current_readings(run.id)
        .await
        .unwrap()
        .iter()
        .map(|r| r.t_s)
        .fold(0.0, f64::max);
    // A probe that slipped onto the heat sink: one wild value, the newest of the run.
    served
        .store
        .add_readings(
            run.id,
            &[NewReading {
                t_s: latest_s + 1.0,
                channel: "temp.tank_capacitor".into(),
                value: 140.0,
                client_id: None,
            }],
            None,
        )
        .await
        .unwrap();
    let wild = served
        .store
        .current_readings(RunId(run.id.0))
        .await
        .unwrap()
        .iter()
        .find(|r| r.value == 140.0)
        .unwrap()
        .id
        .0;
    let counted = served.store.current_reading_count(run.id).await.unwrap();

    let driver = Driver::start();
    let profile = tempfile::tempdir().unwrap();
    let client = driver.phone(profile.path()).await;
    client.goto(&served.url("/login")).await.unwrap();
    fill(&client, "input[name=name]", "demo").await;
    fill(&client, "input[name=password]", "bench-demo-2026").await;
    click_and_load(&client, "form[action='/login'] button[type=submit]").await;

    let run_path = format!("/builds/tool-room-heater/runs/{}", run.id.0);
    client.goto(&served.url(&run_path)).await.unwrap();
    let row = format!("#reading-{wild}");
    click(&client, &format!("{row} details.void summary")).await;
    fill(
        &client,
        &format!("{row} input[name=reason]"),
        "probe slipped",
    )
    .await;
    click_and_load(&client, &format!("{row} form[action$='/void'] button")).await;

    assert_eq!(client.current_url().await.unwrap().path(), run_path);
    let note = texts(&client, &format!("{row} .void-note")).await.join(" ");
    assert!(note.contains("probe slipped"), "{note}");
    assert_eq!(
        served.store.current_reading_count(run.id).await.unwrap(),
        counted - 1,
        "the voided value leaves the count"
    );
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the run page fits"
    );
    screenshot(&client, "run-voided-reading-phone").await;

    client
        .goto(&served.url("/builds/tool-room-heater"))
        .await
        .unwrap();
    assert_eq!(texts(&client, "h1").await.len(), 1, "the build page loads");
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the build page fits"
    );
    screenshot(&client, "build-after-void-phone").await;
    client.close().await.unwrap();
}
