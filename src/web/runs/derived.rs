//! What a run's pages derive from all of its readings (the analysis and its charts, the fits
//! behind the live margins, the latest value of each channel), made once per change of the run
//! and shared by every view and every live stream until the next reading or mark.

use std::sync::Arc;

use crate::analysis::live::{LiveMargin, live_margins, margin_at};
use crate::channel::Channel;
use crate::store::{EventMark, Revision, Run, now_unix_s};
use crate::web::runs::analysis::{analyse_stored_run, analysis_readings};
use crate::web::runs::view::{AnalysisView, LiveRow, live_row};
use crate::web::{AppState, Result};

/// What the page derives from all of a run's readings, kept (in `RunFeeds`' memo) until the
/// run changes: the analysis and its charts, the fits behind the live margins, the latest
/// value of each channel. A view between readings then reads one page of the table only.
pub(super) struct DerivedFromReadings {
    /// The run's `reading_count` and marks when this was made (a change not announced through
    /// `RunFeeds`, an import say, still shows).
    reading_count_key: i64,
    marks_key: Vec<(i64, bool)>,
    pub analysis: AnalysisView,
    margins: Vec<LiveMargin>,
    margins_at_s: f64,
    pub reading_count: i64,
    pub last_values: Vec<(Channel, f64)>,
}

pub(super) async fn derived(
    state: &AppState,
    run: &Run,
    revision: &Revision,
    marks: &[EventMark],
) -> Result<Arc<DerivedFromReadings>> {
    let marks_key: Vec<(i64, bool)> = marks.iter().map(|m| (m.id, m.is_voided())).collect();
    if let Some(memo) = state.run_feeds.memo::<DerivedFromReadings>(run.id)
        && memo.reading_count_key == run.reading_count
        && memo.marks_key == marks_key
    {
        return Ok(memo);
    }
    let readings = analysis_readings(&state.store, run.id).await?;
    let analysed = analyse_stored_run(&state.store, run, revision, &readings).await?;
    let chart_marks: Vec<(f64, String)> = marks
        .iter()
        .filter(|m| !m.is_voided())
        .map(|m| (m.t_s, m.text.clone()))
        .collect();
    let analysis = AnalysisView::build(
        run.id.0,
        &revision.parts,
        &analysed,
        &readings,
        None,
        &chart_marks,
    );
    let margins_at_s = (now_unix_s() - run.started_at) as f64;
    let margins = if run.is_open() {
        let setting = analysed
            .operating_point
            .as_ref()
            .map(|op| op.supply_voltage_v);
        live_margins(&revision.parts, &readings, setting, margins_at_s)
    } else {
        Vec::new()
    };
    let mut last_values: Vec<(Channel, f64)> = Vec::new();
    for r in readings.iter().rev() {
        if !last_values.iter().any(|(c, _)| *c == r.channel) {
            last_values.push((r.channel, r.value));
        }
    }
    let memo = Arc::new(DerivedFromReadings {
        reading_count_key: run.reading_count,
        marks_key,
        analysis,
        margins,
        margins_at_s,
        reading_count: readings.len() as i64,
        last_values,
    });
    state.run_feeds.keep_memo(run.id, memo.clone());
    Ok(memo)
}

impl DerivedFromReadings {
    /// The live margins as they stand `now_s` after the start: the fits made at the last
    /// change, their predicted crossings moved on by the time since.
    pub fn live_rows_at(&self, now_s: f64) -> Vec<LiveRow> {
        self.margins
            .iter()
            .map(|m| live_row(&margin_at(m, self.margins_at_s, now_s)))
            .collect()
    }
}
