//! SIGKILL during concurrent writes loses no acknowledged reading and leaves a sound database
//! (a few trials here; `cargo bench --bench load` runs forty and more).

mod crash_trial;

use std::time::Duration;

use crash_trial::CrashSetup;

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_killed_server_keeps_every_acknowledged_reading() {
    let dir = tempfile::tempdir().unwrap();
    let setup = CrashSetup::new(
        env!("CARGO_BIN_EXE_eddybench").into(),
        dir.path().to_path_buf(),
    )
    .await;
    let mut acknowledged = 0;
    for trial in 0..3 {
        // Different moments of the write stream: early, mid-burst, later.
        let kill_after = Duration::from_millis(300 + 250 * u64::from(trial));
        let outcome = setup.trial(trial, 16, kill_after).await;
        assert_eq!(outcome.missing, 0, "trial {trial}: {outcome:?}");
        assert!(outcome.problems.is_empty(), "trial {trial}: {outcome:?}");
        acknowledged += outcome.acknowledged;
    }
    // A trial where nothing was acknowledged would prove nothing.
    assert!(
        acknowledged > 0,
        "no reading was acknowledged before the kills"
    );
}
