//! The opt-in stop switch of a SCPI supply: it follows the run's live margins and has the
//! supply's output switched off when a part reaches its limit or is predicted to within the
//! set seconds, and logs an event mark saying why. A convenience, not a safety system: it
//! depends on the network, the server, the readings and the supply obeying a command; the
//! user keeps a hand on the supply's own switch.

use std::sync::Arc;
use std::sync::mpsc::Sender;
use std::time::Duration;

use hyper::Method;
use serde::Deserialize;
use serde_json::json;

use super::config::StopSwitch;
use super::server::{ApiError, Server};
use super::state::{Feed, now_unix_s};

/// One part's standing as `GET /api/v1/runs/{id}/live` gives it.
#[derive(Debug, Clone, Deserialize)]
pub struct PartMargin {
    pub title: String,
    pub t_now_c: f64,
    pub limit_c: Option<f64>,
    pub margin_k: Option<f64>,
    pub seconds_to_limit: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct LiveState {
    pub open: bool,
    pub margins: Vec<PartMargin>,
}

/// Why the supply must go off now, if it must: the first part at or over its limit, else the
/// first predicted to reach it in less than `within_s` (so 0 waits for the limit itself).
pub fn reason_to_switch_off(margins: &[PartMargin], within_s: f64) -> Option<String> {
    let over = margins.iter().find_map(|m| {
        let (limit, margin) = (m.limit_c?, m.margin_k?);
        (margin <= 0.0).then(|| {
            format!(
                "{} at {:.1} °C reached its limit of {limit:.1} °C",
                m.title, m.t_now_c
            )
        })
    });
    over.or_else(|| {
        margins.iter().find_map(|m| {
            let (limit, seconds) = (m.limit_c?, m.seconds_to_limit?);
            (seconds < within_s).then(|| {
                format!(
                    "{} at {:.1} °C is predicted to reach its limit of {limit:.1} °C in {seconds:.0} s",
                    m.title, m.t_now_c
                )
            })
        })
    })
}

/// Polls the run's live margins every `every_s` until the feeder stops or the run is
/// finished; sends each reason to switch off to the supply's source.
pub async fn watch(
    feed: Arc<Feed>,
    server: Server,
    run: i64,
    switch: StopSwitch,
    every_s: f64,
    off: Sender<String>,
) {
    let path = format!("/api/v1/runs/{run}/live");
    let mut switched_off = false;
    let mut interval = tokio::time::interval(Duration::from_secs_f64(every_s));
    interval.set_missed_tick_behavior(tokio::time::MissedTickBehavior::Delay);
    while !feed.is_stopping() {
        interval.tick().await;
        let live = match server.call(Method::GET, &path, None).await {
            Ok((json, _)) => serde_json::from_value::<LiveState>(json)
                .map_err(|e| ApiError::Unreachable(e.to_string())),
            Err(e) => Err(e),
        };
        let live = match live {
            Ok(live) => live,
            Err(e) => {
                feed.stop_switch_note(Some(format!(
                    "cannot see the run's margins ({}): the supply is NOT watched",
                    e.message()
                )));
                continue;
            }
        };
        if !live.open {
            return;
        }
        match reason_to_switch_off(&live.margins, switch.within_s) {
            // Sent on every poll while the reason holds: a supply switched back on by hand
            // while the part is still over goes off again.
            Some(reason) => {
                if off.send(reason.clone()).is_err() {
                    return;
                }
                if !switched_off {
                    switched_off = true;
                    let text = format!("supply switched off by the feeder: {reason}");
                    feed.stop_switch_note(Some(text.clone()));
                    mark(&feed, &server, run, &text).await;
                }
            }
            None => {
                if switched_off {
                    feed.stop_switch_note(Some("margins clear again; watching".into()));
                } else {
                    feed.stop_switch_note(None);
                }
                switched_off = false;
            }
        }
    }
}

/// Logs an event mark on the run at the current time.
async fn mark(feed: &Feed, server: &Server, run: i64, text: &str) {
    let Some(started) = feed
        .queue
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .meta()
        .run_started_unix_s
    else {
        return;
    };
    let body = json!({ "t_s": (now_unix_s() - started as f64).max(0.0), "text": text });
    let path = format!("/api/v1/runs/{run}/marks");
    if let Err(e) = server
        .call(Method::POST, &path, serde_json::to_vec(&body).ok())
        .await
    {
        tracing::warn!("could not log the event mark ({})", e.message());
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn part(t_now_c: f64, limit_c: f64, seconds_to_limit: Option<f64>) -> PartMargin {
        PartMargin {
            title: "Tank capacitor 2 temperature".into(),
            t_now_c,
            limit_c: Some(limit_c),
            margin_k: Some(limit_c - t_now_c),
            seconds_to_limit,
        }
    }

    #[test]
    fn at_the_limit_it_switches_off() {
        let reason = reason_to_switch_off(&[part(85.0, 85.0, Some(0.0))], 60.0).unwrap();
        assert_eq!(
            reason,
            "Tank capacitor 2 temperature at 85.0 °C reached its limit of 85.0 °C"
        );
    }

    #[test]
    fn a_prediction_inside_the_window_switches_off_one_outside_does_not() {
        let soon = [part(70.0, 85.0, Some(45.4))];
        assert!(
            reason_to_switch_off(&soon, 60.0)
                .unwrap()
                .contains("in 45 s")
        );
        assert_eq!(reason_to_switch_off(&soon, 30.0), None);
        // A fit that puts the crossing now, with margin still left: only a window above 0.
        let now = [part(84.0, 85.0, Some(0.0))];
        assert!(reason_to_switch_off(&now, 1.0).is_some());
        assert_eq!(reason_to_switch_off(&now, 0.0), None);
    }

    #[test]
    fn no_limit_or_no_prediction_is_no_reason() {
        let unknown = PartMargin {
            title: "Work coil temperature".into(),
            t_now_c: 300.0,
            limit_c: None,
            margin_k: None,
            seconds_to_limit: None,
        };
        assert_eq!(
            reason_to_switch_off(&[unknown, part(60.0, 85.0, None)], 60.0),
            None
        );
    }

    #[test]
    fn a_part_over_its_limit_comes_before_a_prediction() {
        let margins = [part(70.0, 85.0, Some(10.0)), part(90.0, 85.0, Some(0.0))];
        assert!(
            reason_to_switch_off(&margins, 60.0)
                .unwrap()
                .contains("90.0 °C reached")
        );
    }
}
