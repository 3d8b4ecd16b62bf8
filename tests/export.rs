//! Export and import of a build: a lossless round trip between two instances, refusal of files
//! that are not exports (nothing saved), slug clashes, CSV tables safe to open in a
//! spreadsheet, the downloads, the command line and the demo scenario.
//!
//! What differs after a round trip: `exported_at` (the time of each export) and, when the slug
//! is taken on the receiving instance, `build.slug`. Database ids never appear in the document;
//! accounts are not exported, so `created_by` / `entered_by` are empty on the receiving side.

mod common;

use std::path::Path;
use std::process::Command;

use axum::http::{StatusCode, header};
use common::{TestApp, realistic_revision};
use eddybench::export::tables::{Table, write_table};
use eddybench::export::{BuildDocument, DocumentError, parse_document};
use eddybench::parts::{Conductor, OtherPart, Supply};
use eddybench::store::{
    ImportError, NewBuild, NewReading, NewRun, Outcome, RunFinish, RunId, Store, UserId, UserRole,
};

const T0: i64 = 1_760_000_000;

/// The document with what may differ between two exports of the same build blanked out.
fn normalised(mut document: BuildDocument) -> BuildDocument {
    document.exported_at = 0;
    document.build.slug = String::new();
    document
}

async fn exported(store: &Store, slug: &str) -> BuildDocument {
    let mut document = store.export_build(slug).await.unwrap();
    document.add_analyses();
    document
}

async fn open(dir: &Path) -> Store {
    Store::open(dir).await.unwrap()
}

/// Minutes of readings on a run: each channel every 30 s from 0 to 300 s.
fn series(channels: &[(&str, f64, f64)]) -> Vec<NewReading> {
    let mut readings = Vec::new();
    for step in 0..=10 {
        let t_s = 30.0 * f64::from(step);
        for (channel, start, rise_per_step) in channels {
            readings.push(NewReading {
                t_s,
                channel: channel.to_string(),
                value: start + rise_per_step * f64::from(step),
                client_id: None,
            });
        }
    }
    readings
}

struct RunPlan<'a> {
    revision: eddybench::store::Revision,
    started_at: i64,
    load: &'a str,
    readings: Vec<NewReading>,
    finish: Option<(Outcome, Option<&'a str>, &'a str)>,
}

async fn logged_run(
    store: &Store,
    build: &eddybench::store::Build,
    user: UserId,
    plan: RunPlan<'_>,
) -> RunId {
    let mut channels: Vec<String> = plan.readings.iter().map(|r| r.channel.clone()).collect();
    channels.sort();
    channels.dedup();
    let run = store
        .create_run(&NewRun {
            build_id: build.id,
            revision_id: plan.revision.id,
            operator: "Ana at the bench",
            created_by: Some(user),
            started_at: Some(plan.started_at),
            supply_setting_v: Some(24.0),
            supply_current_limit_a: Some(12.0),
            load: plan.load,
            water_mass_kg: None,
            vessel_heat_capacity_j_per_k: None,
            notes: "fan on, lid off",
            channels: &channels,
        })
        .await
        .unwrap();
    store
        .add_readings(run, &plan.readings, Some(user))
        .await
        .unwrap();
    store
        .add_event_mark(
            run,
            &eddybench::store::NewEventMark {
                t_s: 30.0,
                text: "=fan on".into(),
                client_id: None,
            },
            Some(user),
        )
        .await
        .unwrap();
    if let Some((outcome, failed_part, note)) = plan.finish {
        store
            .finish_run(
                run,
                &RunFinish {
                    by: None,
                    outcome,
                    failed_part,
                    note,
                    finished_at: Some(plan.started_at + 300),
                },
            )
            .await
            .unwrap();
    }
    run
}

/// A build with three revisions (r2 and r3 both copied from r1), an idle and a loaded run on
/// r2, a run on r3 where a tank capacitor failed, and an open run; the loaded run has a
/// correction of a correction. Returns the slug.
async fn seed_bench_rig(store: &Store) -> String {
    let user = store
        .create_user("ana", "Ana", UserRole::Editor, "not a real hash")
        .await
        .unwrap();
    let build = store
        .create_build(&NewBuild {
            name: "Bench rig",
            purpose: "Hardening small drill bits",
            notes: "Two chokes; water-cooled coil.\nSecond line, with a \"quote\".",
            created_by: Some(user),
        })
        .await
        .unwrap();
    let (parts, _) = realistic_revision();
    let r1 = store
        .create_revision(build.id, None, &parts, "first build", Some(user))
        .await
        .unwrap();
    let mut more_capacitors = parts.clone();
    more_capacitors.tank_capacitor.as_mut().unwrap().count = 8;
    more_capacitors.other = vec![
        OtherPart {
            label: "12 V fan".into(),
            quantity: 1,
            max_temp_c: None,
        },
        OtherPart {
            label: "heat sink".into(),
            quantity: 2,
            max_temp_c: Some(90.0),
        },
    ];
    let r2 = store
        .create_revision(
            build.id,
            Some(r1.id),
            &more_capacitors,
            "two more capacitors, a fan",
            Some(user),
        )
        .await
        .unwrap();
    let mut round_wire = parts.clone();
    round_wire.work_coil.as_mut().unwrap().conductor = Some(Conductor::Round {
        diameter_m: None,
        awg: Some(10),
    });
    round_wire.supply = Some(Supply {
        label: Some("bench supply".into()),
        nominal_voltage_v: Some(24.0),
        current_limit_a: Some(15.0),
    });
    let r3 = store
        .create_revision(
            build.id,
            Some(r1.id),
            &round_wire,
            "r1 with a solid-wire coil",
            Some(user),
        )
        .await
        .unwrap();

    let electrical = |current_a: f64| {
        vec![
            ("supply_voltage", 24.0, 0.0),
            ("supply_current", current_a, 0.0),
            ("frequency", 118e3, 0.0),
            ("ambient_temp", 21.5, 0.0),
            ("temp.tank_capacitor", 22.0, 2.1),
            ("temp.switch", 23.0, 3.2),
        ]
    };
    logged_run(
        store,
        &build,
        user,
        RunPlan {
            revision: r2.clone(),
            started_at: T0,
            load: "none",
            readings: series(&electrical(2.0)),
            finish: Some((Outcome::Completed, None, "")),
        },
    )
    .await;
    let loaded = logged_run(
        store,
        &build,
        user,
        RunPlan {
            revision: r2.clone(),
            started_at: T0 + 3_600,
            load: "ferrous",
            readings: series(&electrical(8.0)),
            finish: Some((Outcome::Completed, None, "bit glowed at 4 min")),
        },
    )
    .await;
    // A typo in kHz fixed, then the fix itself corrected.
    let typo = store.reading_history(loaded).await.unwrap()[2].id;
    let fixed = store
        .correct_reading(loaded, typo, 117.5e3, Some(user))
        .await
        .unwrap();
    store
        .correct_reading(loaded, fixed, 117.9e3, Some(user))
        .await
        .unwrap();
    logged_run(
        store,
        &build,
        user,
        RunPlan {
            revision: r3.clone(),
            started_at: T0 + 7_200,
            load: "non_ferrous",
            readings: series(&electrical(9.5)),
            finish: Some((
                Outcome::PartFailed,
                Some("tank_capacitor"),
                "one unit cracked",
            )),
        },
    )
    .await;
    logged_run(
        store,
        &build,
        user,
        RunPlan {
            revision: r3,
            started_at: T0 + 10_800,
            load: "none",
            readings: vec![NewReading {
                t_s: 0.0,
                channel: "ambient_temp".into(),
                value: -5.0,
                client_id: None,
            }],
            finish: None,
        },
    )
    .await;
    build.slug
}

async fn raw_pool(dir: &Path) -> sqlx::SqlitePool {
    let path = dir.join(eddybench::store::DATABASE_FILE);
    sqlx::SqlitePool::connect(&format!("sqlite://{}", path.display()))
        .await
        .unwrap()
}

/// Rows that name an account, over the four tables that can.
async fn rows_naming_a_user(dir: &Path) -> i64 {
    sqlx::query_scalar(
        "SELECT (SELECT COUNT(*) FROM builds WHERE created_by IS NOT NULL)
              + (SELECT COUNT(*) FROM revisions WHERE created_by IS NOT NULL)
              + (SELECT COUNT(*) FROM runs WHERE created_by IS NOT NULL)
              + (SELECT COUNT(*) FROM readings WHERE entered_by IS NOT NULL)",
    )
    .fetch_one(&raw_pool(dir).await)
    .await
    .unwrap()
}

const LOGBOOK_TABLES: [&str; 5] = ["builds", "revisions", "parts", "runs", "readings"];

async fn assert_nothing_saved(store: &Store) {
    for table in LOGBOOK_TABLES {
        assert_eq!(store.count_rows(table).await.unwrap(), 0, "{table}");
    }
}

#[tokio::test]
async fn a_build_moves_between_two_instances_without_loss() {
    let (dir_a, dir_b) = (tempfile::tempdir().unwrap(), tempfile::tempdir().unwrap());
    let (a, b) = (open(dir_a.path()).await, open(dir_b.path()).await);
    let slug = seed_bench_rig(&a).await;
    let first = exported(&a, &slug).await;

    let json = first.to_json();
    let value: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(value["format"], "eddybench-build");
    assert_eq!(value["version"], 1);
    assert_eq!(value["revisions"][2]["parent"], 1, "r3 was copied from r1");
    assert_eq!(value["revisions"][0]["parts"]["tank_capacitor"]["count"], 6);
    assert_eq!(value["runs"].as_array().unwrap().len(), 4);
    assert_eq!(value["runs"][2]["outcome"], "part_failed");
    assert_eq!(value["runs"][2]["failed_part"], "tank_capacitor");
    assert!(value["runs"][3]["finished_at"].is_null(), "the open run");
    let loaded = &value["runs"][1]["readings"];
    let n = loaded.as_array().unwrap().len();
    assert_eq!(n, 66 + 2, "every row, replaced ones included");
    assert_eq!(loaded[n - 2]["corrects"], 2);
    assert_eq!(
        loaded[n - 1]["corrects"],
        n - 2,
        "a correction of the correction"
    );
    assert!(value["runs"][1]["analysis"]["operating_point"].is_object());

    let imported_slug = b
        .import_build(&parse_document(&json).unwrap())
        .await
        .unwrap();
    assert_eq!(imported_slug, slug, "a free slug is kept");
    let second = exported(&b, &imported_slug).await;
    assert_eq!(second.build.slug, first.build.slug);
    assert_eq!(normalised(second.clone()), normalised(first.clone()));
    assert_eq!(
        normalised(second).to_json(),
        normalised(first).to_json(),
        "byte for byte once the export time is blanked"
    );

    // The receiving store reads the imported rows as its own.
    for table in LOGBOOK_TABLES {
        assert_eq!(
            b.count_rows(table).await.unwrap(),
            a.count_rows(table).await.unwrap(),
            "{table}"
        );
    }
    let (build_a, build_b) = (
        a.build_by_slug(&slug).await.unwrap(),
        b.build_by_slug(&slug).await.unwrap(),
    );
    let (revs_a, revs_b) = (
        a.revisions_of_build(build_a.id).await.unwrap(),
        b.revisions_of_build(build_b.id).await.unwrap(),
    );
    for (ra, rb) in revs_a.iter().zip(&revs_b) {
        assert_eq!(
            (ra.number, ra.parent_number, &ra.parts, ra.created_at),
            (rb.number, rb.parent_number, &rb.parts, rb.created_at)
        );
    }
    let loaded_b = b.runs_of_build(build_b.id, 10).await.unwrap()[2].id;
    let history = b.reading_history(loaded_b).await.unwrap();
    assert_eq!(history.iter().filter(|r| r.superseded).count(), 2);
    let current = b.current_readings(loaded_b).await.unwrap();
    assert_eq!(current.len(), 66);
    assert!(current.iter().any(|r| r.value == 117.9e3));

    assert!(rows_naming_a_user(dir_a.path()).await > 0);
    assert_eq!(
        rows_naming_a_user(dir_b.path()).await,
        0,
        "accounts do not travel"
    );
}

#[tokio::test]
async fn a_taken_slug_imports_as_the_next_free_one() {
    let dir = tempfile::tempdir().unwrap();
    let store = open(dir.path()).await;
    let slug = seed_bench_rig(&store).await;
    let document = exported(&store, &slug).await;
    assert_eq!(store.import_build(&document).await.unwrap(), "bench-rig-2");
    assert_eq!(store.import_build(&document).await.unwrap(), "bench-rig-3");
    let copy = exported(&store, "bench-rig-2").await;
    assert_eq!(copy.build.slug, "bench-rig-2");
    assert_eq!(normalised(copy), normalised(document));
}

#[tokio::test]
async fn files_that_are_not_exports_are_refused_and_nothing_is_saved() {
    let dir = tempfile::tempdir().unwrap();
    let store = open(dir.path()).await;
    let source_dir = tempfile::tempdir().unwrap();
    let source = open(source_dir.path()).await;
    let slug = seed_bench_rig(&source).await;
    let good: serde_json::Value =
        serde_json::from_str(&exported(&source, &slug).await.to_json()).unwrap();
    let with = |pointer: &str, replacement: serde_json::Value| {
        let mut value = good.clone();
        *value.pointer_mut(pointer).unwrap() = replacement;
        value.to_string()
    };
    let cases = [
        (
            "{\"format\": \"eddybench-build\", ".to_string(),
            "not valid JSON",
        ),
        ("[1, 2, 3]".to_string(), "its `format` is missing"),
        (
            with("/format", "spreadsheet".into()),
            "its `format` is \"spreadsheet\"",
        ),
        (with("/version", 2.into()), "version 2"),
        (with("/version", "1".into()), "version \"1\""),
        (
            with("/runs/0/load", "plasma".into()),
            "unknown variant `plasma`",
        ),
        (
            with(
                "/revisions/0/parts/tank_capacitor/capacitance_f",
                "big".into(),
            ),
            "invalid type",
        ),
        (
            with("/runs/1/revision", 9.into()),
            "r9, which is not in the file",
        ),
        (
            with("/runs/1/readings/66/corrects", 67.into()),
            "does not come before it",
        ),
    ];
    for (text, expected) in cases {
        let error = parse_document(&text).unwrap_err().to_string();
        assert!(error.contains(expected), "{expected:?} not in {error:?}");
    }
    assert_nothing_saved(&store).await;

    // The store checks the document itself too.
    let mut orphan = exported(&source, &slug).await;
    orphan.revisions[1].parent = Some(7);
    match store.import_build(&orphan).await {
        Err(ImportError::Document(DocumentError::Inconsistent(message))) => {
            assert!(message.contains("r7"), "{message}")
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
    assert_nothing_saved(&store).await;
}

#[tokio::test]
async fn a_failure_half_way_saves_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let store = open(dir.path()).await;
    let source_dir = tempfile::tempdir().unwrap();
    let source = open(source_dir.path()).await;
    let document = exported(&source, &seed_bench_rig(&source).await).await;
    // The readings go in last, after the build, its revisions, parts and runs.
    let pool = raw_pool(dir.path()).await;
    sqlx::query(
        "CREATE TRIGGER refuse_readings BEFORE INSERT ON readings
         BEGIN SELECT RAISE(ABORT, 'the disk is full'); END",
    )
    .execute(&pool)
    .await
    .unwrap();
    assert!(matches!(
        store.import_build(&document).await,
        Err(ImportError::Store(_))
    ));
    assert_nothing_saved(&store).await;
    sqlx::query("DROP TRIGGER refuse_readings")
        .execute(&pool)
        .await
        .unwrap();
    assert_eq!(store.import_build(&document).await.unwrap(), "bench-rig");
}

/// The cells of one CSV table, by header name.
fn csv_rows(bytes: &[u8]) -> Vec<std::collections::HashMap<String, String>> {
    assert!(bytes.starts_with(b"\xEF\xBB\xBF"), "UTF-8 byte-order mark");
    let mut reader = csv::Reader::from_reader(bytes);
    let headers = reader.headers().unwrap().clone();
    assert!(
        !headers[0].starts_with('\u{feff}'),
        "the reader drops the mark"
    );
    reader
        .records()
        .map(|r| {
            let record = r.unwrap();
            headers
                .iter()
                .map(str::to_string)
                .zip(record.iter().map(str::to_string))
                .collect()
        })
        .collect()
}

#[tokio::test]
async fn csv_tables_escape_formulas_and_keep_numbers_numeric() {
    let app = TestApp::new().await;
    let store = &app.store;
    let build = store
        .create_build(&NewBuild {
            name: "=HYPERLINK(\"http://x\")",
            purpose: "",
            notes: "",
            created_by: None,
        })
        .await
        .unwrap();
    let (parts, _) = realistic_revision();
    let revision = store
        .create_revision(build.id, None, &parts, "+1 cmd", None)
        .await
        .unwrap();
    let run = store
        .create_run(&NewRun {
            build_id: build.id,
            revision_id: revision.id,
            operator: "@SUM(A1)",
            created_by: None,
            started_at: Some(T0),
            supply_setting_v: Some(24.0),
            supply_current_limit_a: None,
            load: "none",
            water_mass_kg: None,
            vessel_heat_capacity_j_per_k: None,
            notes: "-2",
            channels: &["ambient_temp".into()],
        })
        .await
        .unwrap();
    store
        .add_readings(
            run,
            &[NewReading {
                t_s: 12.5,
                channel: "ambient_temp".into(),
                value: -5.0,
                client_id: None,
            }],
            None,
        )
        .await
        .unwrap();
    store
        .finish_run(
            run,
            &RunFinish {
                by: None,
                outcome: Outcome::Stopped,
                failed_part: None,
                note: "\tindented",
                finished_at: Some(T0 + 60),
            },
        )
        .await
        .unwrap();
    let document = exported(store, &build.slug).await;

    let build_csv = csv_rows(&write_table(&document, Table::Build));
    assert_eq!(build_csv[0]["name"], "'=HYPERLINK(\"http://x\")");
    assert_eq!(build_csv[0]["slug"], "hyperlink-http-x");
    assert_eq!(
        build_csv[0]["created_at_utc"].len(),
        "2026-01-01 00:00:00".len()
    );
    assert_eq!(build_csv[0]["runs"], "1");
    let revisions = csv_rows(&write_table(&document, Table::Revisions));
    assert_eq!(revisions[0]["notes"], "'+1 cmd");
    assert_eq!(revisions[0]["revision"], "r1");
    let runs = csv_rows(&write_table(&document, Table::Runs));
    assert_eq!(runs[0]["operator"], "'@SUM(A1)");
    assert_eq!(runs[0]["notes"], "'-2");
    assert_eq!(runs[0]["outcome_note"], "'\tindented");
    assert_eq!(runs[0]["supply_setting_v"], "24.0");
    assert_eq!(runs[0]["started_at_utc"], "2025-10-09 08:53:20");
    let readings_bytes = write_table(&document, Table::Readings);
    let readings = csv_rows(&readings_bytes);
    assert_eq!(readings[0]["value"], "-5.0", "a number, not escaped");
    assert_eq!(readings[0]["t_s"], "12.5");
    assert_eq!(readings[0]["unit"], "°C");
    let raw = String::from_utf8(readings_bytes).unwrap();
    assert!(raw.contains(",-5.0,"), "{raw}");
    assert!(!raw.contains("'-5"), "{raw}");
    let parts_csv = csv_rows(&write_table(&document, Table::Parts));
    let coil = parts_csv.iter().find(|p| p["role"] == "work_coil").unwrap();
    assert_eq!(coil["conductor.kind"], "tube");
    assert_eq!(coil["turns"], "6.0");
    let bank = parts_csv
        .iter()
        .find(|p| p["role"] == "tank_capacitor")
        .unwrap();
    assert_eq!(
        (bank["quantity"].as_str(), bank["count"].as_str()),
        ("6", "6")
    );
    assert_eq!(bank["capacitance_f"], "3.3e-7");

    // The download is the same file.
    let session = app.signed_in("lead", UserRole::Viewer).await;
    let page = app
        .get(
            &format!("/builds/{}/export/readings.csv", build.slug),
            Some(&session),
        )
        .await;
    assert_eq!(page.status, StatusCode::OK);
    assert_eq!(
        page.headers[header::CONTENT_TYPE],
        "text/csv; charset=utf-8"
    );
    assert_eq!(
        page.headers[header::CONTENT_DISPOSITION],
        "attachment; filename=\"hyperlink-http-x-readings.csv\""
    );
    assert_eq!(page.body, raw);
}

#[tokio::test]
async fn any_signed_in_user_downloads_the_export() {
    let app = TestApp::new().await;
    let slug = seed_bench_rig(&app.store).await;
    let session = app.signed_in("visitor", UserRole::Viewer).await;

    let page = app
        .get(&format!("/builds/{slug}/export.json"), Some(&session))
        .await;
    assert_eq!(page.status, StatusCode::OK);
    assert_eq!(page.headers[header::CONTENT_TYPE], "application/json");
    assert_eq!(
        page.headers[header::CONTENT_DISPOSITION],
        "attachment; filename=\"bench-rig.json\""
    );
    let downloaded = parse_document(&page.body).unwrap();
    assert_eq!(
        normalised(downloaded),
        normalised(exported(&app.store, &slug).await)
    );

    for name in Table::ALL.map(|t| t.name()) {
        let page = app
            .get(&format!("/builds/{slug}/export/{name}.csv"), Some(&session))
            .await;
        assert_eq!(page.status, StatusCode::OK, "{name}");
    }
    for path in [
        format!("/builds/{slug}/export/users.csv"),
        format!("/builds/{slug}/export/readings"),
        format!("/builds/{slug}/export/readings.json"),
        "/builds/no-such-build/export.json".to_string(),
        "/builds/no-such-build/export/runs.csv".to_string(),
    ] {
        let page = app.get(&path, Some(&session)).await;
        assert_eq!(page.status, StatusCode::NOT_FOUND, "{path}");
    }

    let anonymous = app.get(&format!("/builds/{slug}/export.json"), None).await;
    assert!(anonymous.status.is_redirection());
    assert!(anonymous.location().starts_with("/login"));
    let anonymous = app
        .get(&format!("/builds/{slug}/export/runs.csv"), None)
        .await;
    assert!(anonymous.status.is_redirection());
}

fn eddybench(data_dir: &Path, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_eddybench"))
        .env_remove("EDDYBENCH_DATA")
        .env("RUST_LOG", "off")
        .args(args)
        .arg("--data-dir")
        .arg(data_dir)
        .output()
        .expect("the binary runs")
}

fn succeeded(output: std::process::Output) -> String {
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

#[tokio::test]
async fn the_command_line_exports_and_imports() {
    let (dir_a, dir_b) = (tempfile::tempdir().unwrap(), tempfile::tempdir().unwrap());
    let work = tempfile::tempdir().unwrap();
    let slug = seed_bench_rig(&open(dir_a.path()).await).await;
    let file = work.path().join("rig.json");
    let file_arg = file.to_str().unwrap();

    succeeded(eddybench(
        dir_a.path(),
        &["export", &slug, "--out", file_arg],
    ));
    let written = parse_document(&std::fs::read_to_string(&file).unwrap()).unwrap();
    assert_eq!(
        succeeded(eddybench(dir_b.path(), &["import", file_arg])),
        "bench-rig\n"
    );
    let output = eddybench(dir_b.path(), &["import", file_arg]);
    assert!(String::from_utf8_lossy(&output.stderr).contains("imported as `bench-rig-2`"));
    assert_eq!(succeeded(output), "bench-rig-2\n");

    let again = parse_document(&succeeded(eddybench(
        dir_b.path(),
        &["export", "bench-rig-2"],
    )))
    .unwrap();
    assert_eq!(normalised(again), normalised(written));

    let tables = work.path().join("tables");
    succeeded(eddybench(
        dir_a.path(),
        &[
            "export",
            &slug,
            "--format",
            "csv",
            "--out",
            tables.to_str().unwrap(),
        ],
    ));
    for table in Table::ALL {
        let bytes = std::fs::read(tables.join(table.file_name())).unwrap();
        assert!(!csv_rows(&bytes).is_empty(), "{}", table.name());
    }

    let refused_dir = tempfile::tempdir().unwrap();
    let wrong = work.path().join("wrong.json");
    std::fs::write(&wrong, r#"{"format": "eddybench-build", "version": 99}"#).unwrap();
    let output = eddybench(refused_dir.path(), &["import", wrong.to_str().unwrap()]);
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("version 99"), "{stderr}");
    assert!(stderr.contains("nothing imported"), "{stderr}");
    assert_nothing_saved(&open(refused_dir.path()).await).await;

    let output = eddybench(dir_a.path(), &["export", "no-such-build"]);
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stderr).contains("no build `no-such-build`"));
}

#[tokio::test]
async fn the_demo_builds_round_trip() {
    let (dir_a, dir_b) = (tempfile::tempdir().unwrap(), tempfile::tempdir().unwrap());
    let (a, b) = (open(dir_a.path()).await, open(dir_b.path()).await);
    eddybench::demo::seed(&a).await.unwrap();
    let builds = a.list_builds().await.unwrap();
    assert_eq!(builds.len(), 2);
    let main = &eddybench::demo::scenario()[0];
    for summary in &builds {
        let first = exported(&a, &summary.slug).await;
        let slug = b.import_build(&first).await.unwrap();
        assert_eq!(slug, summary.slug);
        let second = exported(&b, &slug).await;
        assert_eq!(normalised(second), normalised(first.clone()), "{slug}");
        if slug == main.slug {
            assert_eq!(first.revisions.len(), main.revisions.len());
            assert_eq!(first.runs.len(), main.runs.len());
            assert!(
                first
                    .runs
                    .iter()
                    .any(|r| r.outcome == Some(Outcome::PartFailed)),
                "the demo's failed run is there"
            );
        }
    }
    // Parts as a spreadsheet: every revision's bank is a row.
    let document = exported(&a, &main.slug).await;
    let parts = csv_rows(&write_table(&document, Table::Parts));
    assert_eq!(
        parts
            .iter()
            .filter(|p| p["role"] == "tank_capacitor")
            .count(),
        main.revisions.len()
    );
}
