//! The build's history read like a logbook: "Run 8 started on r3 with a ferrous workpiece, by
//! Ana." The audit trail keeps what happened in stable words; this turns each entry into a
//! sentence with the channel, load and outcome in the trade's words.

use std::collections::HashMap;

use crate::channel::Channel;
use crate::store::Outcome;
use crate::units::short_number;

/// One audit entry as kept: who, the action, its subject and detail.
pub struct Entry<'a> {
    pub who: &'a str,
    pub action: &'a str,
    pub subject: &'a str,
    pub detail: &'a str,
}

fn load_words(load: &str) -> &str {
    match load {
        "none" => "no load (idle)",
        "ferrous" => "a ferrous workpiece",
        "non_ferrous" => "a non-ferrous workpiece",
        "water" => "the water calorimeter",
        other => other,
    }
}

/// "run 8" → ("Run 8", " on r3") when the run's revision is known.
fn run_words(subject: &str, revision_of_run: &HashMap<i64, String>) -> (String, String) {
    let id = subject
        .strip_prefix("run ")
        .and_then(|n| n.trim().parse::<i64>().ok());
    match id {
        Some(id) => (
            format!("Run {id}"),
            revision_of_run
                .get(&id)
                .map(|r| format!(" on {r}"))
                .unwrap_or_default(),
        ),
        None => (subject.to_string(), String::new()),
    }
}

fn outcome_words(detail: &str) -> String {
    let (outcome, part) = match detail.split_once(": ") {
        Some((o, p)) => (o, Some(p)),
        None => (detail, None),
    };
    let words = Outcome::parse(outcome).map_or(outcome.to_string(), |o| o.title().to_lowercase());
    match part {
        Some(part) => format!("{words} ({})", part.replace('_', " ")),
        None => words,
    }
}

/// "temp.tank_capacitor.1 at 30 s: was 41.2, now 42.1" in words.
fn correction_words(detail: &str) -> String {
    let Some((where_, values)) = detail.split_once(": was ") else {
        return detail.replace('_', " ");
    };
    let (channel, at) = where_.split_once(" at ").unwrap_or((where_, ""));
    let title = channel
        .parse::<Channel>()
        .map_or_else(|_| channel.replace('_', " "), |c| c.title().to_lowercase());
    let number = |t: &str| {
        t.trim()
            .parse::<f64>()
            .map_or_else(|_| t.trim().to_string(), short_number)
    };
    let (old, new) = values.split_once(", now ").unwrap_or((values, ""));
    let at = at.trim_end_matches(" s");
    format!(
        "{title} at {} s, {} → {}",
        number(at),
        number(old),
        number(new)
    )
}

/// One history line as a sentence.
pub fn logbook_line(entry: &Entry, revision_of_run: &HashMap<i64, String>) -> String {
    let who = entry.who;
    match entry.action {
        "build created" => format!("Build “{}” created by {who}.", entry.subject),
        "revision created" if entry.detail.is_empty() => {
            format!("Revision {} created by {who}.", entry.subject)
        }
        "revision created" => format!(
            "Revision {} created by {who}, {}.",
            entry.subject, entry.detail
        ),
        "run started" => {
            let (run, on) = run_words(entry.subject, revision_of_run);
            format!(
                "{run} started{on} with {}, by {who}.",
                load_words(entry.detail)
            )
        }
        "run finished" => {
            let (run, on) = run_words(entry.subject, revision_of_run);
            format!(
                "{run}{on} finished by {who}: {}.",
                outcome_words(entry.detail)
            )
        }
        "reading corrected" => {
            let (run, _) = run_words(entry.subject, revision_of_run);
            format!(
                "{who} corrected a reading of {}: {}.",
                run.to_lowercase(),
                correction_words(entry.detail)
            )
        }
        "readings imported" => {
            let (run, _) = run_words(entry.subject, revision_of_run);
            format!(
                "{who} imported {} into {}.",
                entry.detail.replace("rows", "readings"),
                run.to_lowercase()
            )
        }
        "share created" => format!(
            "{who} made a read-only share link ({}{}).",
            entry.subject,
            if entry.detail.is_empty() {
                String::new()
            } else {
                format!(", {}", entry.detail)
            }
        ),
        "share revoked" => format!("{who} revoked a share link ({}).", entry.subject),
        other => {
            let text = format!("{other} {} {}", entry.subject, entry.detail);
            let mut sentence = text.trim().replace('_', " ");
            if let Some(first) = sentence.get(..1) {
                sentence = first.to_uppercase() + &sentence[1..];
            }
            format!("{sentence}, by {who}.")
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn line(action: &str, subject: &str, detail: &str) -> String {
        let revisions = HashMap::from([(8, "r3".to_string())]);
        logbook_line(
            &Entry {
                who: "Ana",
                action,
                subject,
                detail,
            },
            &revisions,
        )
    }

    #[test]
    fn entries_read_like_a_logbook() {
        assert_eq!(
            line("run started", "run 8", "non_ferrous"),
            "Run 8 started on r3 with a non-ferrous workpiece, by Ana."
        );
        assert_eq!(
            line("run finished", "run 8", "part_failed: tank capacitor 3"),
            "Run 8 on r3 finished by Ana: part failed (tank capacitor 3)."
        );
        assert_eq!(
            line(
                "reading corrected",
                "run 8",
                "temp.tank_capacitor.1 at 30 s: was 41.2, now 42.10000000000001"
            ),
            "Ana corrected a reading of run 8: tank capacitor 1 temperature at 30 s, 41.2 → 42.1."
        );
        assert_eq!(
            line("readings imported", "run 9", "120 rows"),
            "Ana imported 120 readings into run 9."
        );
        assert_eq!(
            line("revision created", "r4", "copied from r3"),
            "Revision r4 created by Ana, copied from r3."
        );
    }

    #[test]
    fn unknown_actions_still_read_as_a_sentence_without_underscores() {
        let text = line("reading voided", "run 8", "supply_current at 20 s");
        assert_eq!(text, "Reading voided run 8 supply current at 20 s, by Ana.");
        assert!(!text.contains('_'));
    }
}
