//! One full `validate` + `evaluate` (with flags) of a realistic revision.

use criterion::{Criterion, criterion_group, criterion_main};
use eddybench::analysis::{OperatingPoint, evaluate, validate};
use eddybench::parts::Parts;
use std::hint::black_box;

/// A plausible bench revision with every part given (invented), as JSON the API would carry.
const REVISION: &str = r#"{
    "tank_capacitor": {"capacitance_f": 0.33e-6, "count": 6, "dissipation_factor": 5e-4,
                       "voltage_rating_vrms": 300, "current_rating_arms": 15, "max_temp_c": 85},
    "work_coil": {"turns": 6, "mean_diameter_m": 0.04, "length_m": 0.05, "lead_length_m": 0.2,
                  "conductor": {"kind": "tube", "outer_diameter_m": 0.006, "wall_m": 0.001}},
    "choke": {"inductance_h": 100e-6, "count": 2, "dcr_ohm": 0.02, "saturation_current_a": 20},
    "switch": {"vds_max_v": 100, "rds_on_ohm": 0.008, "rds_tempco_pct_per_k": 0.6,
               "tj_max_c": 175, "rth_jc_k_per_w": 0.5, "vgs_max_v": 20},
    "gate_resistor": {"resistance_ohm": 470, "power_rating_w": 1},
    "gate_clamp": {"zener_voltage_v": 12}
}"#;

const OPERATING_POINT: &str = r#"{
    "supply_voltage_v": 24, "supply_current_a": 8, "frequency_hz": 123500, "ambient_c": 22,
    "temperatures_c": {"tank_capacitor": 45, "switch": 55, "work_coil": 60}
}"#;

fn validate_and_evaluate(c: &mut Criterion) {
    let parts: Parts = serde_json::from_str(REVISION).expect("revision parses");
    let op: OperatingPoint = serde_json::from_str(OPERATING_POINT).expect("operating point parses");
    c.bench_function("validate + evaluate, realistic revision", |b| {
        b.iter(|| {
            let (parts, op) = (black_box(&parts), black_box(&op));
            validate(parts, op).expect("valid");
            evaluate(parts, op)
        })
    });
}

criterion_group!(benches, validate_and_evaluate);
criterion_main!(benches);
