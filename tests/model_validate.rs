//! Bad inputs: each refused, naming the right field as a JSON path.

mod common;

use common::{at, realistic_revision};
use eddybench::analysis::{InputError, OperatingPoint, validate};
use eddybench::parts::{Conductor, OtherPart, Parts};

fn refused_field(parts: &Parts, op: &OperatingPoint) -> String {
    match validate(parts, op) {
        Err(InputError { field, .. }) => field,
        Ok(()) => panic!("should be refused: {parts:?} {op:?}"),
    }
}

#[test]
fn a_realistic_revision_passes() {
    let (parts, op) = realistic_revision();
    assert_eq!(validate(&parts, &op), Ok(()));
    assert_eq!(validate(&Parts::default(), &at(0.0)), Ok(()));
}

#[test]
fn bad_capacitance_is_refused() {
    let (parts, op) = realistic_revision();
    for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, 0.0, -1e-6, 2.0] {
        let mut parts = parts.clone();
        parts.tank_capacitor.as_mut().unwrap().capacitance_f = bad;
        assert_eq!(
            refused_field(&parts, &op),
            "parts.tank_capacitor.capacitance_f",
            "{bad}"
        );
    }
}

#[test]
fn counts_of_zero_are_refused() {
    let (parts, op) = realistic_revision();
    let mut bad = parts.clone();
    bad.tank_capacitor.as_mut().unwrap().count = 0;
    assert_eq!(refused_field(&bad, &op), "parts.tank_capacitor.count");
    let mut bad = parts.clone();
    bad.choke.as_mut().unwrap().count = 0;
    assert_eq!(refused_field(&bad, &op), "parts.choke.count");
    let mut bad = parts;
    bad.other.push(OtherPart {
        label: "fan".into(),
        quantity: 0,
        max_temp_c: None,
    });
    assert_eq!(refused_field(&bad, &op), "parts.other[0].quantity");
}

#[test]
fn bad_inductances_are_refused() {
    let (parts, op) = realistic_revision();
    for bad in [f64::NAN, 0.0, -1e-6, 1.5] {
        let mut coil = parts.clone();
        coil.work_coil.as_mut().unwrap().inductance_h = Some(bad);
        assert_eq!(
            refused_field(&coil, &op),
            "parts.work_coil.inductance_h",
            "{bad}"
        );
        let mut choke = parts.clone();
        choke.choke.as_mut().unwrap().inductance_h = bad;
        assert_eq!(
            refused_field(&choke, &op),
            "parts.choke.inductance_h",
            "{bad}"
        );
    }
}

#[test]
fn bad_resistances_and_geometry_are_refused() {
    let (parts, op) = realistic_revision();
    let mut bad = parts.clone();
    bad.gate_resistor.as_mut().unwrap().resistance_ohm = 0.0;
    assert_eq!(
        refused_field(&bad, &op),
        "parts.gate_resistor.resistance_ohm"
    );
    let mut bad = parts.clone();
    bad.switch.as_mut().unwrap().rds_on_ohm = Some(-0.01);
    assert_eq!(refused_field(&bad, &op), "parts.switch.rds_on_ohm");
    let mut bad = parts.clone();
    bad.choke.as_mut().unwrap().dcr_ohm = Some(f64::NAN);
    assert_eq!(refused_field(&bad, &op), "parts.choke.dcr_ohm");
    let mut bad = parts.clone();
    bad.work_coil.as_mut().unwrap().turns = Some(0.0);
    assert_eq!(refused_field(&bad, &op), "parts.work_coil.turns");
    let mut bad = parts.clone();
    bad.work_coil.as_mut().unwrap().conductor = Some(Conductor::Tube {
        outer_diameter_m: 6e-3,
        wall_m: 4e-3,
    });
    assert_eq!(refused_field(&bad, &op), "parts.work_coil.conductor.wall_m");
    let mut bad = parts;
    bad.work_coil.as_mut().unwrap().conductor = Some(Conductor::Round {
        diameter_m: None,
        awg: Some(60),
    });
    assert_eq!(refused_field(&bad, &op), "parts.work_coil.conductor.awg");
}

/// A way to make an operating point invalid.
type Spoil = fn(&mut OperatingPoint);

#[test]
fn bad_operating_points_are_refused() {
    let (parts, op) = realistic_revision();
    let cases: [(&str, Spoil); 9] = [
        ("operating_point.supply_voltage_v", |op| {
            op.supply_voltage_v = f64::NAN
        }),
        ("operating_point.supply_voltage_v", |op| {
            op.supply_voltage_v = -1.0
        }),
        ("operating_point.supply_voltage_v", |op| {
            op.supply_voltage_v = 20e3
        }),
        ("operating_point.supply_current_a", |op| {
            op.supply_current_a = Some(f64::INFINITY)
        }),
        ("operating_point.frequency_hz", |op| {
            op.frequency_hz = Some(0.0)
        }),
        ("operating_point.frequency_hz", |op| {
            op.frequency_hz = Some(200e6)
        }),
        ("operating_point.ambient_c", |op| op.ambient_c = Some(-80.0)),
        ("operating_point.temperatures_c.switch", |op| {
            op.temperatures_c.switch = Some(2000.0)
        }),
        ("operating_point.temperatures_c.work_coil", |op| {
            op.temperatures_c.work_coil = Some(f64::NAN)
        }),
    ];
    for (field, spoil) in cases {
        let mut bad = op.clone();
        spoil(&mut bad);
        assert_eq!(refused_field(&parts, &bad), field);
    }
}

#[test]
fn the_first_bad_field_wins_and_the_message_reads_plainly() {
    let (mut parts, mut op) = realistic_revision();
    parts.choke.as_mut().unwrap().inductance_h = -1.0;
    op.supply_voltage_v = f64::NAN;
    let error = validate(&parts, &op).unwrap_err();
    assert_eq!(error.field, "parts.choke.inductance_h");
    assert_eq!(
        error.to_string(),
        "parts.choke.inductance_h: must be greater than 0 H, not -1"
    );
}

#[test]
fn unknown_operating_point_fields_are_refused_by_serde() {
    let json = r#"{"supply_voltage_v": 24, "supply_curent_a": 10}"#;
    assert!(serde_json::from_str::<OperatingPoint>(json).is_err());
    let ok: OperatingPoint = serde_json::from_str(r#"{"supply_voltage_v": 24}"#).unwrap();
    assert_eq!(ok.ambient_c, None);
}
