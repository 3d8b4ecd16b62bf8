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

/// Why the supply must go off.
#[derive(Debug, Clone, PartialEq)]
pub struct Reason {
    pub title: String,
    pub t_now_c: f64,
    pub limit_c: f64,
    /// Predicted seconds to the limit; `None` when the part is at or over it.
    pub seconds_to_limit: Option<f64>,
}

impl Reason {
    /// The status line's words.
    pub fn words(&self) -> String {
        match self.seconds_to_limit {
            None => format!(
                "{} at {:.1} °C reached its limit of {:.1} °C",
                self.title, self.t_now_c, self.limit_c
            ),
            Some(seconds) => format!(
                "{} at {:.1} °C is predicted to reach its limit of {:.1} °C in {seconds:.0} s",
                self.title, self.t_now_c, self.limit_c
            ),
        }
    }

    /// The event mark's text: short enough for a mark on the run's timeline (80 characters).
    pub fn mark_text(&self) -> String {
        let part = self.title.trim_end_matches(" temperature");
        let text = match self.seconds_to_limit {
            None => format!(
                "feeder: supply off, {part} {:.1} °C at limit {:.1} °C",
                self.t_now_c, self.limit_c
            ),
            Some(seconds) => format!(
                "feeder: supply off, {part} {:.1} °C, limit {:.1} °C in {seconds:.0} s",
                self.t_now_c, self.limit_c
            ),
        };
        text.chars().take(80).collect()
    }
}

/// Why the supply must go off now, if it must: the first part at or over its limit, else the
/// first predicted to reach it in less than `within_s` (so 0 waits for the limit itself).
pub fn reason_to_switch_off(margins: &[PartMargin], within_s: f64) -> Option<Reason> {
    let reason = |m: &PartMargin, seconds_to_limit| {
        Some(Reason {
            title: m.title.clone(),
            t_now_c: m.t_now_c,
            limit_c: m.limit_c?,
            seconds_to_limit,
        })
    };
    let over = margins
        .iter()
        .filter(|m| m.margin_k.is_some_and(|k| k <= 0.0))
        .find_map(|m| reason(m, None));
    over.or_else(|| {
        margins
            .iter()
            .filter(|m| m.seconds_to_limit.is_some_and(|s| s < within_s))
            .find_map(|m| reason(m, m.seconds_to_limit))
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
                if off.send(reason.words()).is_err() {
                    return;
                }
                if !switched_off {
                    switched_off = true;
                    let mut note = format!("supply switched off by the feeder: {}", reason.words());
                    if let Err(e) = mark(&feed, &server, run, &reason.mark_text()).await {
                        note.push_str(&format!(" (the event mark could not be logged: {e})"));
                    }
                    feed.stop_switch_note(Some(note));
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

/// Logs an event mark on the run now, through the run page's marks address (an editor's token
/// acts there as on the API). Its id makes a retried mark count once.
async fn mark(feed: &Feed, server: &Server, run: i64, text: &str) -> Result<(), String> {
    let state = server.run(run).await.map_err(|e| e.message())?;
    let id = format!(
        "{}-mark-{}",
        feed.queue
            .lock()
            .unwrap_or_else(|p| p.into_inner())
            .meta()
            .id_prefix,
        now_unix_s() as u64
    );
    let path = format!("{}/marks", state.url);
    server
        .post_form(&path, &[("text", text), ("id", &id)])
        .await
        .map(|_| ())
        .map_err(|e| e.message())
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
            reason.words(),
            "Tank capacitor 2 temperature at 85.0 °C reached its limit of 85.0 °C"
        );
        assert_eq!(
            reason.mark_text(),
            "feeder: supply off, Tank capacitor 2 85.0 °C at limit 85.0 °C"
        );
    }

    #[test]
    fn a_prediction_inside_the_window_switches_off_one_outside_does_not() {
        let soon = [part(70.0, 85.0, Some(45.4))];
        let reason = reason_to_switch_off(&soon, 60.0).unwrap();
        assert!(reason.words().ends_with("in 45 s"), "{}", reason.words());
        assert_eq!(
            reason.mark_text(),
            "feeder: supply off, Tank capacitor 2 70.0 °C, limit 85.0 °C in 45 s"
        );
        assert_eq!(reason_to_switch_off(&soon, 30.0), None);
        // A fit that puts the crossing now, with margin still left: only a window above 0.
        let now = [part(84.0, 85.0, Some(0.0))];
        assert!(reason_to_switch_off(&now, 1.0).is_some());
        assert_eq!(reason_to_switch_off(&now, 0.0), None);
    }

    #[test]
    fn a_mark_stays_within_80_characters() {
        let mut long = part(90.0, 85.0, None);
        long.title = "A very long part name that someone typed in full ".repeat(3);
        let reason = reason_to_switch_off(&[long], 0.0).unwrap();
        assert_eq!(reason.mark_text().chars().count(), 80);
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
        let reason = reason_to_switch_off(&margins, 60.0).unwrap();
        assert_eq!(reason.t_now_c, 90.0);
        assert_eq!(reason.seconds_to_limit, None);
    }
}
