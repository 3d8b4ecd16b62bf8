//! Run digests for a build's pages: the kept ones, and the missing ones made from their readings
//! once (then kept), so that a build page never reads all of a build's readings.

use std::collections::HashMap;

use crate::analysis::run_summary::{RunDigest, SUMMARY_VERSION, digest_run};
use crate::store::{Build, Revision, Run, Store};
use crate::web::runs::analysis::{analyse_stored_run, analysis_readings};
use crate::web::{AppError, Result};

/// Digests of the given runs of a build, in the runs' order.
pub async fn digests_of(
    store: &Store,
    build: &Build,
    runs: &[Run],
    revisions: &[Revision],
) -> Result<Vec<RunDigest>> {
    let kept: HashMap<i64, String> = store
        .run_digests_of_build(build.id, SUMMARY_VERSION)
        .await?
        .into_iter()
        .map(|(id, json)| (id.0, json))
        .collect();
    let mut digests = Vec::with_capacity(runs.len());
    for run in runs {
        if let Some(digest) = kept
            .get(&run.id.0)
            .and_then(|json| serde_json::from_str(json).ok())
        {
            digests.push(digest);
            continue;
        }
        let revision = revisions
            .iter()
            .find(|r| r.id == run.revision_id)
            .ok_or_else(|| AppError::Internal(anyhow::anyhow!("run {} has no revision", run.id)))?;
        let digest = make_digest(store, run, revision).await?;
        // An open run changes with every reading; keep only the digests of finished runs.
        if !run.is_open() {
            let json = serde_json::to_string(&digest).map_err(|e| AppError::Internal(e.into()))?;
            store
                .save_run_digest(run.id, SUMMARY_VERSION, &json)
                .await?;
        }
        digests.push(digest);
    }
    Ok(digests)
}

/// Makes and keeps the digest of a run that just finished, so that the build page reads it
/// instead of the run's readings.
pub async fn keep_digest_of_finished_run(store: &Store, run_id: crate::store::RunId) -> Result<()> {
    let run = store.run_by_id(run_id).await?;
    let revision = store.revision_by_id(run.revision_id).await?;
    let digest = make_digest(store, &run, &revision).await?;
    let json = serde_json::to_string(&digest).map_err(|e| AppError::Internal(e.into()))?;
    store
        .save_run_digest(run.id, SUMMARY_VERSION, &json)
        .await?;
    Ok(())
}

async fn make_digest(store: &Store, run: &Run, revision: &Revision) -> Result<RunDigest> {
    let readings = analysis_readings(store, run.id).await?;
    let analysis = analyse_stored_run(store, run, revision, &readings).await?;
    Ok(digest_run(
        run.id.0,
        &run.revision_label(),
        run.started_at,
        run.load == "none",
        &revision.parts,
        &readings,
        &analysis,
    ))
}
