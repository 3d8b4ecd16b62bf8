//! What changed in an open run, told to whoever watches it: one broadcast channel per run that
//! has watchers (the run page's live stream; later a team server's other instances). Writers
//! call [`RunFeeds::notify`] after their change is durable; watchers re-read what they need from
//! the store, so a missed or merged notice loses nothing.

use std::collections::HashMap;
use std::sync::{Arc, Mutex};

use tokio::sync::broadcast;

use crate::store::RunId;

/// What kind of change a run had.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RunChange {
    /// Readings were added or corrected.
    Readings,
    /// An event mark was added or voided.
    Marks,
    /// The run was finished.
    Finished,
}

/// Notices a slow watcher may fall behind by before it is told it lagged (and re-reads).
const BACKLOG: usize = 64;

/// The per-run channels, shared by every handler through `AppState`.
#[derive(Clone, Default, Debug)]
pub struct RunFeeds {
    runs: Arc<Mutex<HashMap<RunId, broadcast::Sender<RunChange>>>>,
}

impl RunFeeds {
    /// Starts watching a run.
    pub fn subscribe(&self, run: RunId) -> broadcast::Receiver<RunChange> {
        let mut runs = self.runs.lock().unwrap_or_else(|e| e.into_inner());
        runs.entry(run)
            .or_insert_with(|| broadcast::channel(BACKLOG).0)
            .subscribe()
    }

    /// Tells a run's watchers about a change; a run nobody watches costs a map lookup. The
    /// channel of a run whose watchers have all gone is dropped here.
    pub fn notify(&self, run: RunId, change: RunChange) {
        let mut runs = self.runs.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(sender) = runs.get(&run)
            && sender.send(change).is_err()
        {
            runs.remove(&run);
        }
    }

    /// Runs with a channel (for tests of the clean-up).
    pub fn watched_runs(&self) -> usize {
        self.runs.lock().unwrap_or_else(|e| e.into_inner()).len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[tokio::test]
    async fn watchers_of_a_run_hear_its_changes_and_only_its() {
        let feeds = RunFeeds::default();
        let mut first = feeds.subscribe(RunId(1));
        let mut other = feeds.subscribe(RunId(2));
        feeds.notify(RunId(1), RunChange::Readings);
        assert_eq!(first.recv().await.unwrap(), RunChange::Readings);
        assert!(other.try_recv().is_err());
        feeds.notify(RunId(3), RunChange::Marks);
        assert_eq!(feeds.watched_runs(), 2, "nobody watches run 3");
        drop(other);
        feeds.notify(RunId(2), RunChange::Finished);
        assert_eq!(
            feeds.watched_runs(),
            1,
            "run 2's channel went with its last watcher"
        );
    }
}
