//! What changed in the parts from one revision to the next: per role, and per field of the
//! parts editor (with the label and the coil's conductor), the old and new value in engineering
//! notation. Pure: two parts lists in, rows out.

use serde_json::Value;

use crate::parts::{Conductor, OtherPart, Parts, Role};
use crate::units::{Unit, eng};
use crate::web::revisions::part_fields::{EDITOR_ROLES, PART_FIELDS, PartField};

/// How one row differs between the earlier and the later revision.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Change {
    /// Only the later revision has it.
    Added,
    /// Only the earlier revision has it.
    Removed,
    Changed,
    Unchanged,
}

impl Change {
    /// The row's class, and the word shown beside it (colour never alone).
    pub fn word(self) -> &'static str {
        match self {
            Change::Added => "added",
            Change::Removed => "removed",
            Change::Changed => "changed",
            Change::Unchanged => "unchanged",
        }
    }
}

/// One row of the diff: a whole part (`field` is `None`) or one of its fields.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldDiff {
    pub role: Role,
    /// The role's title, or an other part's label.
    pub part: String,
    pub field: Option<String>,
    pub old: Option<String>,
    pub new: Option<String>,
    pub change: Change,
}

impl FieldDiff {
    /// "Tank capacitor · Units in parallel", or the part alone for a whole-part row.
    pub fn title(&self) -> String {
        match &self.field {
            Some(field) => format!("{} · {field}", self.part),
            None => self.part.clone(),
        }
    }

    /// "4 → 6", "— → 12 A", or the one side of an added or removed part.
    pub fn values(&self) -> String {
        let side = |v: &Option<String>| v.clone().unwrap_or_else(|| "—".into());
        match self.change {
            Change::Added if self.field.is_none() => side(&self.new),
            Change::Removed if self.field.is_none() => side(&self.old),
            Change::Unchanged => side(&self.new),
            _ => format!("{} → {}", side(&self.old), side(&self.new)),
        }
    }

    pub fn class(&self) -> &'static str {
        self.change.word()
    }
}

/// The diff between two consecutive chosen revisions.
#[derive(Debug, Clone, PartialEq)]
pub struct StepDiff {
    pub from: String,
    pub to: String,
    /// Added, removed and changed rows, in the editor's order.
    pub changes: Vec<FieldDiff>,
    pub unchanged: Vec<FieldDiff>,
}

impl StepDiff {
    pub fn new(from: &str, old: &Parts, to: &str, new: &Parts) -> StepDiff {
        let (unchanged, changes) = diff_parts(old, new)
            .into_iter()
            .partition(|d| d.change == Change::Unchanged);
        StepDiff {
            from: from.to_string(),
            to: to.to_string(),
            changes,
            unchanged,
        }
    }
}

/// Every row of the two parts lists, unchanged ones included, in the editor's order: roles in
/// order, then each role's label, fields and conductor; other parts by label.
pub fn diff_parts(old: &Parts, new: &Parts) -> Vec<FieldDiff> {
    let old_json = serde_json::to_value(old).expect("parts always serialise");
    let new_json = serde_json::to_value(new).expect("parts always serialise");
    let mut rows = Vec::new();
    for role in EDITOR_ROLES {
        let before = old_json
            .get(role.key())
            .map(|_| field_texts(old, &old_json, role));
        let after = new_json
            .get(role.key())
            .map(|_| field_texts(new, &new_json, role));
        let part = role.title().to_string();
        match (before, after) {
            (None, None) => {}
            (None, Some(after)) => rows.push(whole_part(role, part, None, Some(after))),
            (Some(before), None) => rows.push(whole_part(role, part, Some(before), None)),
            (Some(before), Some(after)) => {
                // Both lists follow the same field order, so walk the union in that order.
                let mut titles: Vec<&str> = before.iter().map(|(t, _)| t.as_str()).collect();
                for (title, _) in &after {
                    if !titles.contains(&title.as_str()) {
                        titles.push(title);
                    }
                }
                let find = |list: &[(String, FieldText)], title: &str| {
                    list.iter()
                        .find(|(t, _)| t == title)
                        .map(|(_, v)| v.clone())
                };
                for title in titles {
                    let (o, n) = (find(&before, title), find(&after, title));
                    let change = match (&o, &n) {
                        (None, Some(_)) => Change::Added,
                        (Some(_), None) => Change::Removed,
                        (Some(a), Some(b)) if a.same_as(b) => Change::Unchanged,
                        _ => Change::Changed,
                    };
                    let (old_text, new_text) = FieldText::shown(o.as_ref(), n.as_ref());
                    rows.push(FieldDiff {
                        role,
                        part: part.clone(),
                        field: Some(title.to_string()),
                        old: old_text,
                        new: new_text,
                        change,
                    });
                }
            }
        }
    }
    rows.extend(diff_others(&old.other, &new.other));
    rows
}

/// A field's value: its text, and the number behind it when it has one.
#[derive(Debug, Clone, PartialEq)]
struct FieldText {
    text: String,
    number: Option<(f64, Unit)>,
}

impl FieldText {
    fn same_as(&self, other: &FieldText) -> bool {
        match (self.number, other.number) {
            (Some((a, _)), Some((b, _))) => a == b,
            _ => self.text == other.text,
        }
    }

    /// The texts to show; when two different numbers round to the same text, both get more
    /// digits so the row never reads "330 nF → 330 nF".
    fn shown(old: Option<&FieldText>, new: Option<&FieldText>) -> (Option<String>, Option<String>) {
        match (old, new) {
            (Some(a), Some(b)) if a.text == b.text && !a.same_as(b) => {
                let precise = |f: &FieldText| match f.number {
                    Some((v, unit)) => format!("{v} {}", unit.symbol()).trim().to_string(),
                    None => f.text.clone(),
                };
                (Some(precise(a)), Some(precise(b)))
            }
            _ => (old.map(|f| f.text.clone()), new.map(|f| f.text.clone())),
        }
    }
}

fn whole_part(
    role: Role,
    part: String,
    before: Option<Vec<(String, FieldText)>>,
    after: Option<Vec<(String, FieldText)>>,
) -> FieldDiff {
    let summary = |fields: Vec<(String, FieldText)>| {
        fields
            .into_iter()
            .map(|(title, value)| format!("{title} {}", value.text))
            .collect::<Vec<_>>()
            .join("; ")
    };
    FieldDiff {
        role,
        part,
        field: None,
        change: if after.is_some() {
            Change::Added
        } else {
            Change::Removed
        },
        old: before.map(summary),
        new: after.map(summary),
    }
}

/// The label, the editor's fields and the conductor of one role that the parts list has.
fn field_texts(parts: &Parts, json: &Value, role: Role) -> Vec<(String, FieldText)> {
    let object = json.get(role.key());
    let mut fields = Vec::new();
    if let Some(label) = parts.label(role) {
        fields.push((
            "Label".to_string(),
            FieldText {
                text: label.to_string(),
                number: None,
            },
        ));
    }
    for spec in PART_FIELDS.iter().filter(|f| f.role == role) {
        if let Some(number) = object.and_then(|o| o.get(spec.key)).and_then(Value::as_f64) {
            fields.push((spec.title.to_string(), number_text(number, spec)));
        }
    }
    if role == Role::WorkCoil
        && let Some(conductor) = parts.work_coil.as_ref().and_then(|c| c.conductor.as_ref())
    {
        fields.push((
            "Conductor".to_string(),
            FieldText {
                text: conductor_text(conductor),
                number: None,
            },
        ));
    }
    fields
}

fn number_text(number: f64, spec: &PartField) -> FieldText {
    let text = match spec.unit {
        Unit::None => crate::units::three_significant(number),
        unit => eng(number, unit).to_string(),
    };
    FieldText {
        text,
        number: Some((number, spec.unit)),
    }
}

fn conductor_text(conductor: &Conductor) -> String {
    let metres = |v: f64| eng(v, Unit::Metre).to_string();
    match conductor {
        Conductor::Round {
            diameter_m: Some(d),
            ..
        } => format!("round wire {}", metres(*d)),
        Conductor::Round { awg: Some(n), .. } => format!("round wire AWG {n}"),
        Conductor::Round { .. } => "round wire".into(),
        Conductor::Tube {
            outer_diameter_m,
            wall_m,
        } => format!(
            "tube {} outside, {} wall",
            metres(*outer_diameter_m),
            metres(*wall_m)
        ),
    }
}

fn other_text(part: &OtherPart) -> String {
    match part.max_temp_c {
        Some(t) => format!("{} × (rated {})", part.quantity, eng(t, Unit::Celsius)),
        None => format!("{} ×", part.quantity),
    }
}

/// Other parts are matched by label.
fn diff_others(old: &[OtherPart], new: &[OtherPart]) -> Vec<FieldDiff> {
    let row = |label: &str, o: Option<&OtherPart>, n: Option<&OtherPart>| {
        let change = match (o, n) {
            (None, _) => Change::Added,
            (_, None) => Change::Removed,
            (Some(a), Some(b)) if a == b => Change::Unchanged,
            _ => Change::Changed,
        };
        FieldDiff {
            role: Role::Other,
            part: format!("{}: {label}", Role::Other.title()),
            field: None,
            old: o.map(other_text),
            new: n.map(other_text),
            change,
        }
    };
    let mut rows: Vec<FieldDiff> = old
        .iter()
        .map(|o| row(&o.label, Some(o), new.iter().find(|n| n.label == o.label)))
        .collect();
    rows.extend(
        new.iter()
            .filter(|n| !old.iter().any(|o| o.label == n.label))
            .map(|n| row(&n.label, None, Some(n))),
    );
    rows
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parts::{Choke, TankCapacitor};

    fn bank(count: u32) -> TankCapacitor {
        TankCapacitor {
            label: None,
            capacitance_f: 0.33e-6,
            count,
            dissipation_factor: None,
            esr_ohm: None,
            voltage_rating_vrms: None,
            current_rating_arms: None,
            max_temp_c: None,
            self_heating_limit_k: None,
        }
    }

    #[test]
    fn a_field_changed_below_three_figures_still_reads_as_a_change() {
        let old = Parts {
            tank_capacitor: Some(bank(6)),
            ..Parts::default()
        };
        let mut new = old.clone();
        new.tank_capacitor.as_mut().unwrap().capacitance_f = 0.3300001e-6;
        let diff = StepDiff::new("r1", &old, "r2", &new);
        assert_eq!(diff.changes.len(), 1);
        let values = diff.changes[0].values();
        let (a, b) = values.split_once(" → ").unwrap();
        assert_ne!(a, b, "{values}");
    }

    #[test]
    fn a_choke_added_is_one_row_with_its_values() {
        let old = Parts::default();
        let new = Parts {
            choke: Some(Choke {
                label: None,
                inductance_h: 47e-6,
                count: 2,
                dcr_ohm: None,
                saturation_current_a: None,
                max_temp_c: None,
            }),
            ..Parts::default()
        };
        let rows = diff_parts(&old, &new);
        assert_eq!(rows.len(), 1);
        assert_eq!(rows[0].change, Change::Added);
        assert_eq!(rows[0].values(), "Inductance 47 µH; Number of chokes 2");
    }
}
