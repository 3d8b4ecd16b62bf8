//! The store: migrations on an empty database, pragmas, revisions and readings.

mod common;

use eddybench::parts::{Parts, TankCapacitor};
use eddybench::store::{NewBuild, NewReading, NewRun, Store};

#[tokio::test]
async fn migrations_create_every_table_on_an_empty_database() {
    let dir = tempfile::tempdir().unwrap();
    let store = Store::open(dir.path()).await.unwrap();
    for table in [
        "users",
        "sessions",
        "builds",
        "revisions",
        "parts",
        "runs",
        "readings",
        "login_failures",
    ] {
        assert_eq!(store.count_rows(table).await.unwrap(), 0, "{table}");
    }
    assert!(dir.path().join("eddybench.db").exists());
    // Opening again runs no migration twice.
    drop(store);
    let again = Store::open(dir.path()).await.unwrap();
    assert_eq!(again.count_rows("builds").await.unwrap(), 0);
}

#[tokio::test]
async fn the_database_runs_with_the_durable_pragmas() {
    let dir = tempfile::tempdir().unwrap();
    let store = Store::open(dir.path()).await.unwrap();
    let pragmas = store.pragmas().await.unwrap();
    assert_eq!(pragmas.journal_mode, "wal");
    assert_eq!(pragmas.synchronous, 2, "FULL");
    assert_eq!(pragmas.foreign_keys, 1);
    assert!(pragmas.busy_timeout_ms >= 1000);
}

fn bank(count: u32) -> Parts {
    Parts {
        tank_capacitor: Some(TankCapacitor {
            label: Some("polypropylene film, 330 nF".into()),
            capacitance_f: 330e-9,
            count,
            dissipation_factor: Some(5e-4),
            esr_ohm: None,
            voltage_rating_vrms: Some(250.0),
            current_rating_arms: Some(8.0),
            max_temp_c: Some(85.0),
            self_heating_limit_k: None,
        }),
        ..Parts::default()
    }
}

async fn fresh_store() -> (tempfile::TempDir, Store) {
    let dir = tempfile::tempdir().unwrap();
    let store = Store::open(dir.path()).await.unwrap();
    (dir, store)
}

/// A build named "Rig" (slug `rig`, or `rig-2`… when taken).
async fn rig(store: &Store) -> eddybench::store::Build {
    let new = NewBuild {
        name: "Rig",
        purpose: "",
        notes: "",
        created_by: None,
    };
    store.create_build(&new).await.unwrap()
}

#[tokio::test]
async fn revisions_number_in_order_and_keep_their_parts_and_parent() {
    let (_dir, store) = fresh_store().await;
    let build = rig(&store).await;
    let r1 = store
        .create_revision(build.id, None, &bank(4), "first", None)
        .await
        .unwrap();
    let r2 = store
        .create_revision(build.id, Some(r1.id), &bank(6), "two more", None)
        .await
        .unwrap();
    assert_eq!(
        (r1.label(), r2.label()),
        ("r1".to_string(), "r2".to_string())
    );
    let loaded = store.revision_by_number(build.id, 2).await.unwrap();
    assert_eq!(loaded.parts, bank(6));
    assert_eq!(loaded.parent_number, Some(1));
    assert_eq!(
        store.revision_by_number(build.id, 1).await.unwrap().parts,
        bank(4),
        "r1 unchanged"
    );
    let again = rig(&store).await;
    assert_eq!(again.slug, "rig-2", "a taken slug is numbered");
}

#[tokio::test]
async fn a_correction_keeps_the_old_value_in_the_history() {
    let (_dir, store) = fresh_store().await;
    let build = rig(&store).await;
    let revision = store
        .create_revision(build.id, None, &bank(4), "", None)
        .await
        .unwrap();
    let run = store
        .create_run(&NewRun {
            build_id: build.id,
            revision_id: revision.id,
            operator: "Ada",
            created_by: None,
            started_at: None,
            supply_setting_v: Some(24.0),
            supply_current_limit_a: None,
            load: "none",
            water_mass_kg: None,
            vessel_heat_capacity_j_per_k: None,
            notes: "",
            channels: &["temp.tank_capacitor".into()],
        })
        .await
        .unwrap();
    store
        .add_readings(
            run,
            &[NewReading {
                t_s: 30.0,
                channel: "temp.tank_capacitor".into(),
                value: 410.0,
                client_id: None,
            }],
            None,
        )
        .await
        .unwrap();
    let old = store.current_readings(run).await.unwrap()[0].id;
    store.correct_reading(run, old, 41.0, None).await.unwrap();
    let current = store.current_readings(run).await.unwrap();
    assert_eq!(current.len(), 1);
    assert_eq!(current[0].value, 41.0);
    let history = store.reading_history(run).await.unwrap();
    assert_eq!(history.len(), 2);
    assert!(history.iter().any(|r| r.value == 410.0 && r.superseded));
    assert!(
        store.correct_reading(run, old, 42.0, None).await.is_err(),
        "a replaced value cannot be corrected again"
    );
}
