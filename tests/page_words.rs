//! Every page of the demo and of a build with hostile names, walked as a signed-in editor, as an
//! administrator and through a share link: no rule code, snake_case field name, file name,
//! unformatted float or developer phrase reaches the text a visitor reads. What the user typed
//! themselves (the hostile names) is taken out before the check: echoing it is the point.

mod common;

use std::collections::{BTreeSet, VecDeque};

use axum::http::header;
use common::{Page, Session, TestApp};
use eddybench::analysis::flags::RULE_CODES;
use eddybench::parts::{Parts, Supply, TankCapacitor, WorkCoil};
use eddybench::secrets::{random_token, token_hash};
use eddybench::store::{
    NewBuild, NewEventMark, NewReading, NewRun, NewShare, Outcome, RunFinish, UserRole, now_unix_s,
};
use regex::Regex;

/// Pages a walk may open at most (the demo has a few dozen).
const MAX_PAGES: usize = 400;

/// Typed by the owner of the hostile build: markup, a snake_case word, a file name, a float in
/// exponent form, a right-to-left override and a word too long for any phone.
const HOSTILE_NAME: &str = "<b>coil_v2.final</b> 1e300 \u{202e}tilt";
const HOSTILE_WORD: &str =
    "Überlanger-Spulenname-ohne-Leerzeichen-der-jede-Telefonbreite-sprengt-LIESMICH.md";
const HOSTILE_LABEL: &str = "cap_bank.csv 0.123456789";
const HOSTILE_OPERATOR: &str = "Ana <i>o'Neil</i>";
const HOSTILE_NOTE: &str = "supply_voltage: -5 is outside 0..10000 (pasted)";
const HOSTILE_MARK: &str = "fan_on.txt";

fn typed_by_users() -> Vec<String> {
    let mut typed: Vec<String> = [
        HOSTILE_NAME,
        HOSTILE_WORD,
        HOSTILE_LABEL,
        HOSTILE_OPERATOR,
        HOSTILE_NOTE,
        HOSTILE_MARK,
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    // Both names together are the build's name.
    typed.insert(0, format!("{HOSTILE_NAME} {HOSTILE_WORD}"));
    typed
}

/// What a visitor reads: text outside scripts and styles, and the attributes shown as text.
fn visible_text(page: &Page) -> Vec<String> {
    let html = page.html();
    let mut out = Vec::new();
    for node in html.tree.nodes() {
        match node.value() {
            scraper::Node::Text(text) => {
                let hidden = node.ancestors().any(|a| {
                    a.value()
                        .as_element()
                        // `code` marks what the user types literally, such as a CSV
                        // header line: a format to copy, not a word of ours.
                        .is_some_and(|e| {
                            matches!(e.name(), "script" | "style" | "template" | "code")
                        })
                });
                if !hidden && !text.trim().is_empty() {
                    out.push(text.to_string());
                }
            }
            scraper::Node::Element(element) => {
                for name in ["title", "aria-label", "alt", "placeholder"] {
                    if let Some(value) = element.attr(name) {
                        out.push(value.to_string());
                    }
                }
            }
            _ => {}
        }
    }
    out
}

struct Rule {
    what: &'static str,
    pattern: Regex,
}

fn rules() -> Vec<Rule> {
    let codes = RULE_CODES.join("|");
    let rule = |what, pattern: &str| Rule {
        what,
        pattern: Regex::new(pattern).unwrap(),
    };
    vec![
        rule("a rule code", &format!(r"\b({codes})\b")),
        rule("a snake_case name", r"\b[a-z][a-z0-9]*_[a-z0-9_]+\b"),
        rule(
            "a file name",
            r"(?i)\b[\w-]+\.(md|rs|html|sql|json|csv|toml|txt|js|css)\b",
        ),
        rule("an unformatted float", r"\d\.\d{5,}|\b\d{7,}\b"),
        rule("a number in exponent form", r"\b\d+(\.\d+)?[eE][-+]?\d+\b"),
        rule(
            "a value that is not a number",
            r"\b(NaN|inf|Infinity|undefined|null)\b",
        ),
        rule(
            "developer wording",
            r"(?i)from memory|no source|\bSome\(|\bOk\(|\bErr\(|§",
        ),
    ]
}

/// Every offending piece of text on a page, with the rule it breaks.
fn offences(path: &str, page: &Page, rules: &[Rule], typed: &[String]) -> Vec<String> {
    let mut found = Vec::new();
    for text in visible_text(page) {
        let mut text = text;
        for t in typed {
            text = text.replace(t.as_str(), " ");
        }
        for rule in rules {
            if let Some(m) = rule.pattern.find(&text) {
                found.push(format!(
                    "{path}: {} {:?} in {:?}",
                    rule.what,
                    m.as_str(),
                    text.trim()
                ));
            }
        }
    }
    found
}

/// The page's own links worth following: pages of this site, not files, feeds or the API.
fn links(page: &Page) -> Vec<String> {
    let selector = scraper::Selector::parse("a[href]").unwrap();
    page.html()
        .select(&selector)
        .filter_map(|a| a.value().attr("href"))
        .map(|href| href.split('#').next().unwrap_or_default().to_string())
        .filter(|href| href.starts_with('/') && !href.starts_with("//"))
        // Further pages of a long table read like its first.
        .filter(|href| !href.contains("page="))
        .filter(|href| {
            let path = href.split('?').next().unwrap_or_default();
            let last = path.rsplit('/').next().unwrap_or_default();
            !path.starts_with("/static/")
                && !path.starts_with("/api/")
                && !path.contains("/export")
                && !path.contains("/attachments/")
                && !path.ends_with("/events")
                && !last.contains('.')
        })
        .collect()
}

/// Opens every page reachable from `start`, checks each, and returns how many were opened.
async fn walk(app: &TestApp, session: Option<&Session>, start: &[String]) -> usize {
    let rules = rules();
    let typed = typed_by_users();
    let mut seen: BTreeSet<String> = BTreeSet::new();
    let mut queue: VecDeque<String> = start.iter().cloned().collect();
    let mut problems = Vec::new();
    while let Some(path) = queue.pop_front() {
        if !seen.insert(path.clone()) {
            continue;
        }
        assert!(seen.len() <= MAX_PAGES, "more than {MAX_PAGES} pages");
        let page = app.get(&path, session).await;
        let html = page
            .headers
            .get(header::CONTENT_TYPE)
            .and_then(|v| v.to_str().ok())
            .is_some_and(|v| v.starts_with("text/html"));
        if page.status.is_redirection() {
            queue.push_back(page.location());
            continue;
        }
        if !html {
            continue;
        }
        problems.extend(offences(&path, &page, &rules, &typed));
        assert_eq!(
            page.count("script:not([src])"),
            0,
            "{path}: a script that is not ours"
        );
        queue.extend(links(&page));
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    seen.len()
}

fn reading(t_s: f64, channel: &str, value: f64) -> NewReading {
    NewReading {
        t_s,
        channel: channel.into(),
        value,
        client_id: None,
    }
}

/// A build whose every free-text field is hostile, with a finished run and an open one.
async fn hostile_build(app: &TestApp) -> String {
    let store = &app.store;
    let name = format!("{HOSTILE_NAME} {HOSTILE_WORD}");
    let build = store
        .create_build(&NewBuild {
            name: &name,
            purpose: HOSTILE_NOTE,
            notes: HOSTILE_WORD,
            created_by: None,
        })
        .await
        .unwrap();
    let parts = Parts {
        tank_capacitor: Some(TankCapacitor {
            label: Some(HOSTILE_LABEL.into()),
            capacitance_f: 0.33e-6,
            count: 6,
            dissipation_factor: Some(5e-4),
            esr_ohm: None,
            voltage_rating_vrms: Some(300.0),
            current_rating_arms: Some(15.0),
            max_temp_c: Some(85.0),
            self_heating_limit_k: None,
        }),
        work_coil: Some(WorkCoil {
            inductance_h: Some(1e-6),
            ..WorkCoil::default()
        }),
        supply: Some(Supply {
            label: Some(HOSTILE_WORD.into()),
            nominal_voltage_v: Some(24.0),
            current_limit_a: Some(20.0),
        }),
        ..Parts::default()
    };
    let revision = store
        .create_revision(build.id, None, &parts, HOSTILE_NOTE, None)
        .await
        .unwrap();
    let started = now_unix_s() - 3_600;
    for (minutes_ago, finished) in [(60, true), (10, false)] {
        let run = store
            .create_run(&NewRun {
                build_id: build.id,
                revision_id: revision.id,
                operator: HOSTILE_OPERATOR,
                created_by: None,
                started_at: Some(now_unix_s() - minutes_ago * 60),
                supply_setting_v: Some(24.0),
                supply_current_limit_a: Some(20.0),
                load: "ferrous",
                water_mass_kg: None,
                vessel_heat_capacity_j_per_k: None,
                notes: HOSTILE_NOTE,
                channels: &[],
            })
            .await
            .unwrap();
        let mut readings = Vec::new();
        for i in 0..10 {
            let t_s = f64::from(i) * 30.0;
            readings.push(reading(t_s, "supply_voltage", 24.0));
            readings.push(reading(t_s, "supply_current", 8.0 + 0.01 * f64::from(i)));
            readings.push(reading(t_s, "frequency", 125_537.0 - 3.0 * f64::from(i)));
            readings.push(reading(
                t_s,
                "temp.tank_capacitor.1",
                22.0 + 30.0 * (1.0 - (-t_s / 300.0).exp()),
            ));
        }
        store.add_readings(run, &readings, None).await.unwrap();
        store
            .add_event_mark(
                run,
                &NewEventMark {
                    t_s: 60.0,
                    text: HOSTILE_MARK.into(),
                    client_id: None,
                },
                None,
            )
            .await
            .unwrap();
        if finished {
            store
                .finish_run(
                    run,
                    &RunFinish {
                        by: None,
                        outcome: Outcome::Completed,
                        failed_part: None,
                        note: HOSTILE_NOTE,
                        finished_at: Some(started + 600),
                    },
                )
                .await
                .unwrap();
        }
    }
    build.slug
}

/// The pages a link does not reach: forms opened with their values, and pages of refusals.
fn asked_pages(slug: &str) -> Vec<String> {
    vec![
        "/".into(),
        "/builds/new".into(),
        "/account/password".into(),
        "/admin/users".into(),
        format!("/builds/{slug}"),
        format!("/builds/{slug}/report"),
        format!("/builds/{slug}/compare?revs=r1,r2"),
        format!("/builds/{slug}/compare?revs=r1,r2,r3,r4"),
        format!("/builds/{slug}/compare?revs=r2,r3&supply_voltage_v=30"),
        format!("/builds/{slug}/revisions/r1?supply_voltage_v=30&frequency_hz=125.5k"),
        format!("/builds/{slug}/revisions/r1?supply_voltage_v=-5&frequency_hz=1e300"),
        format!("/builds/{slug}/compare?revs=r1,r99"),
        "/builds/no-such-build".into(),
    ]
}

#[tokio::test]
async fn no_developer_word_reaches_a_page_of_the_demo_or_of_a_hostile_build() {
    let app = TestApp::new().await;
    eddybench::demo::seed(&app.store).await.unwrap();
    let hostile = hostile_build(&app).await;
    let admin = app.signed_in("ana", UserRole::Admin).await;

    let mut start = Vec::new();
    for build in app.store.list_builds().await.unwrap() {
        start.extend(asked_pages(&build.slug));
    }
    start.push(format!("/builds/{hostile}/runs/new"));
    let pages = walk(&app, Some(&admin), &start).await;
    assert!(pages > 20, "the walk reached only {pages} pages");

    // The hostile build through a share link, read by someone without an account.
    {
        let build = app.store.build_by_slug(&hostile).await.unwrap();
        let token = random_token();
        app.store
            .create_share(&NewShare {
                build_id: build.id,
                revision_number: None,
                label: HOSTILE_NAME,
                token_hash: &token_hash(&token),
                created_by: None,
                expires_at: None,
            })
            .await
            .unwrap();
        let shared = walk(
            &app,
            None,
            &[format!("/s/{token}"), format!("/s/{token}/report")],
        )
        .await;
        assert!(shared > 2, "the share walk reached only {shared} pages");
    }
}

#[tokio::test]
async fn the_check_catches_each_kind_of_developer_word() {
    let rules = rules();
    for (bad, rule) in [
        ("(cap-current; limit: 12 A)", "a rule code"),
        (
            "supply_voltage: -5 is outside 0..10000",
            "a snake_case name",
        ),
        ("see NOTES.md §4", "a file name"),
        ("152.40000000001 °C", "an unformatted float"),
        ("started at 1764683573", "an unformatted float"),
        ("1e300 V", "a number in exponent form"),
        ("efficiency NaN %", "a value that is not a number"),
        ("from memory", "developer wording"),
    ] {
        let page = Page {
            status: axum::http::StatusCode::OK,
            headers: Default::default(),
            body: format!("<html><body><p>{bad}</p></body></html>"),
        };
        let found = offences("/", &page, &rules, &[]);
        assert!(
            found.iter().any(|f| f.contains(rule)),
            "{bad:?} is not caught as {rule}: {found:?}"
        );
    }
    let plain = Page {
        status: axum::http::StatusCode::OK,
        headers: Default::default(),
        body: "<p>Tank capacitor too hot: 105.7 °C, limit 85 °C (IEC 61071:2017).</p>".into(),
    };
    assert_eq!(offences("/", &plain, &rules, &[]), Vec::<String>::new());
}
