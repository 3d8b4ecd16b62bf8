//! Seeds a fresh store with the demo accounts and the scenario's builds.

use crate::secrets::hash_password;
use crate::store::{
    NewBuild, NewEventMark, NewReading, NewRun, Outcome, RunFinish, Store, UserRole, now_unix_s,
};

use super::scenario;

/// The accounts `eddybench demo` prints.
pub struct DemoLogin {
    pub editor_name: String,
    pub editor_password: String,
    pub viewer_name: String,
    pub viewer_password: String,
}

/// Seeds the demo accounts and, into a store without builds, the scenario.
pub async fn seed(store: &Store) -> anyhow::Result<DemoLogin> {
    let login = DemoLogin {
        editor_name: "demo".into(),
        editor_password: "bench-demo-2026".into(),
        viewer_name: "visitor".into(),
        viewer_password: "bench-visitor-2026".into(),
    };
    let mut editor_id = None;
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
        let id = match store.user_by_name(name).await? {
            Some(user) => user.id,
            None => {
                let password = password.clone();
                let hash = tokio::task::spawn_blocking(move || hash_password(&password)).await?;
                store.create_user(name, display, role, &hash).await?
            }
        };
        if role == UserRole::Editor {
            editor_id = Some(id);
        }
    }
    if !store.list_builds().await?.is_empty() {
        return Ok(login);
    }
    let now = now_unix_s();
    for demo in scenario() {
        let build = store
            .create_build(&NewBuild {
                name: &demo.name,
                purpose: &demo.purpose,
                notes: &demo.notes,
                created_by: editor_id,
            })
            .await?;
        let mut parent = None;
        let mut revision_ids = Vec::new();
        for revision in &demo.revisions {
            // Dated a day before its first run, so the story reads in order.
            let first_run_days = demo
                .runs
                .iter()
                .filter(|r| r.revision_label == revision.label)
                .map(|r| r.days_ago)
                .fold(0.0, f64::max);
            let created_at = now - ((first_run_days + 1.0) * 86_400.0) as i64;
            let stored = store
                .create_revision_at(
                    build.id,
                    parent,
                    &revision.parts,
                    &revision.notes,
                    editor_id,
                    created_at,
                )
                .await?;
            parent = Some(stored.id);
            revision_ids.push((revision.label.clone(), stored.id));
        }
        for run in &demo.runs {
            let revision_id = revision_ids
                .iter()
                .find(|(label, _)| *label == run.revision_label)
                .map(|(_, id)| *id)
                .ok_or_else(|| anyhow::anyhow!("demo run names an unknown revision"))?;
            let started_at = now - (run.days_ago * 86_400.0) as i64;
            let mut channels: Vec<String> =
                run.readings.iter().map(|r| r.channel.to_string()).collect();
            channels.sort();
            channels.dedup();
            let failed = run.outcome == "part_failed";
            let id = store
                .create_run(&NewRun {
                    build_id: build.id,
                    revision_id,
                    operator: &run.operator,
                    created_by: editor_id,
                    started_at: Some(started_at),
                    supply_setting_v: Some(run.supply_setting_v),
                    supply_current_limit_a: run.supply_current_limit_a,
                    load: run.load,
                    water_mass_kg: run.water_mass_kg,
                    vessel_heat_capacity_j_per_k: run.vessel_heat_capacity_j_per_k,
                    notes: if failed { "" } else { &run.notes },
                    channels: &channels,
                })
                .await?;
            let readings: Vec<NewReading> = run
                .readings
                .iter()
                .map(|r| NewReading {
                    t_s: r.t_s,
                    channel: r.channel.to_string(),
                    value: r.value,
                    client_id: None,
                })
                .collect();
            store.add_readings(id, &readings, editor_id).await?;
            // An invented mark, so the demo's charts and tables show one.
            store
                .add_event_mark(
                    id,
                    &NewEventMark {
                        t_s: 0.0,
                        text: "supply on".into(),
                        client_id: None,
                    },
                    editor_id,
                )
                .await?;
            let duration_s = run.readings.iter().map(|r| r.t_s).fold(0.0, f64::max);
            let outcome = Outcome::parse(run.outcome)
                .ok_or_else(|| anyhow::anyhow!("demo run has an unknown outcome"))?;
            store
                .finish_run(
                    id,
                    &RunFinish {
                        by: editor_id,
                        outcome,
                        failed_part: run.failed_part.map(|r| r.key()),
                        note: if failed { &run.notes } else { "" },
                        finished_at: Some(started_at + duration_s.ceil() as i64),
                    },
                )
                .await?;
        }
    }
    Ok(login)
}
