//! The real browser at phone size on the demo data: the build page's compare picker opens the
//! compare page, which fits the phone; the report fits too, and prints to PDF.

#[path = "common/browser.rs"]
mod browser;
mod common;

use browser::{Driver, Served, click_and_load, fill, horizontal_overflow_px, screenshot, texts};
use fantoccini::wd::PrintConfiguration;

const SLUG: &str = "tool-room-heater";

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn compare_and_report_fit_a_phone_and_the_report_prints() {
    let served = Served::start().await;
    let login = eddybench::demo::seed(&served.store).await.unwrap();
    let driver = Driver::start();
    let profile = tempfile::tempdir().unwrap();
    let client = driver.phone(profile.path()).await;

    client.goto(&served.url("/login")).await.unwrap();
    fill(&client, "input[name=name]", &login.editor_name).await;
    fill(&client, "input[name=password]", &login.editor_password).await;
    click_and_load(&client, "form[action='/login'] button[type=submit]").await;
    assert_eq!(texts(&client, "h1").await, vec!["Builds"]);

    client
        .goto(&served.url(&format!("/builds/{SLUG}")))
        .await
        .unwrap();
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the build page fits the phone"
    );
    screenshot(&client, "build-page-phone").await;

    // The picker ticks the two newest revisions.
    click_and_load(&client, "#compare-picker button[type=submit]").await;
    let url = client.current_url().await.unwrap();
    assert_eq!(url.path(), format!("/builds/{SLUG}/compare"));
    assert_eq!(url.query(), Some("rev=r4&rev=r3"));
    // The heading reads older to newer, whatever order the picker sent.
    assert_eq!(texts(&client, "h1").await, vec!["Compare r3, r4"]);
    // The demo's r3 and r4 ran at different supply settings, so their measured rows are shown
    // side by side but neither is marked better (runs compare only at a like supply and load).
    assert!(!texts(&client, "#measured-rows li").await.is_empty());
    assert!(
        texts(&client, "#measured-rows .better .mark")
            .await
            .is_empty()
    );
    let overflow = horizontal_overflow_px(&client).await;
    assert!(
        overflow <= 0,
        "the compare page fits the phone ({overflow} px over)"
    );
    screenshot(&client, "compare-phone").await;
    screenshot_at(&client, "measured", "compare-phone-measured").await;
    screenshot_at(&client, "charts", "compare-phone-charts").await;
    save_pdf(&client, "compare.pdf").await;

    client
        .goto(&served.url(&format!("/builds/{SLUG}/report")))
        .await
        .unwrap();
    let overflow = horizontal_overflow_px(&client).await;
    assert!(
        overflow <= 0,
        "the report fits the phone ({overflow} px over)"
    );
    screenshot(&client, "report-phone").await;
    screenshot_at(&client, "report-runs", "report-phone-runs").await;

    save_pdf(&client, "report.pdf").await;

    client.close().await.unwrap();
}

/// "Save as PDF": the browser's own print of the page (A4), kept for a person to look at.
async fn save_pdf(client: &fantoccini::Client, name: &str) {
    let pdf = client.print(PrintConfiguration::default()).await.unwrap();
    assert!(pdf.starts_with(b"%PDF"), "a PDF");
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join(name), &pdf).unwrap();
}

/// A screenshot with the element of this id scrolled to the top.
async fn screenshot_at(client: &fantoccini::Client, id: &str, name: &str) {
    client
        .execute(
            "document.getElementById(arguments[0]).scrollIntoView();",
            vec![serde_json::json!(id)],
        )
        .await
        .unwrap();
    screenshot(client, name).await;
}
