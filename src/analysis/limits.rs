//! The thresholds the flags compare against, each with where it comes from.
//!
//! A part's own rating (from the parts contract) always overrides a default here; the defaults
//! apply only where the user gave none, and the flag's message says so.

/// One threshold: a number, its unit, and its source as a person should read it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Threshold {
    /// Stable name of the threshold, for listing the table.
    pub name: &'static str,
    pub value: f64,
    pub unit: &'static str,
    pub source: &'static str,
}

pub const CAP_DEFAULT_MAX_TEMP_C: Threshold = Threshold {
    name: "cap-default-max-temp",
    value: 85.0,
    unit: "°C",
    source: "Film capacitors are usually rated 85 °C (makers' data, e.g. TDK/EPCOS, Film Capacitors — \
             General technical information, 2015)",
};

pub const CAP_TEMP_WARNING_BAND_K: Threshold = Threshold {
    name: "cap-temp-warning-band",
    value: 10.0,
    unit: "K",
    source: "Common practice: warn within 10 K of the rated temperature, since a film capacitor's life \
             halves for about every 8 K more (Kong & Lee, IEEE Transactions on Dielectrics and \
             Electrical Insulation, 2004)",
};

pub const CAP_DEFAULT_SELF_HEATING_K: Threshold = Threshold {
    name: "cap-default-self-heating",
    value: 10.0,
    unit: "K",
    source: "A film capacitor maker's limit for polyester units: about 10 K of self-heating (a typical \
             figure of makers' application notes)",
};

pub const CAP_CURRENT_WARNING_FRACTION: Threshold = Threshold {
    name: "cap-current-warning",
    value: 0.8,
    unit: "of rated current",
    source: "Common practice: warn above 80 % of the rated RMS current",
};

pub const CAP_VOLTAGE_WARNING_FRACTION: Threshold = Threshold {
    name: "cap-voltage-warning",
    value: 0.9,
    unit: "of derated voltage",
    source: "Common practice: warn above 90 % of the derated voltage rating",
};

pub const CAP_VOLTAGE_DERATING: &str = "Film capacitor datasheets derate the voltage \
     rating by about 1.25 %/K above 85 °C (makers' data); warning above 90 % of it is common practice";

pub const CAP_DRIFT_WARNING: Threshold = Threshold {
    name: "cap-drift-warning",
    value: 0.05,
    unit: "of nominal",
    source: "Common practice: a bank 5 % off nominal is worth a look",
};

pub const CAP_DRIFT_FAILURE: Threshold = Threshold {
    name: "cap-drift-failure",
    value: 0.10,
    unit: "of nominal",
    source: "Common practice: a bank 10 % off nominal has a failing unit",
};

pub const SWITCH_VOLTAGE_WARNING_FRACTION: Threshold = Threshold {
    name: "switch-voltage-warning",
    value: 0.8,
    unit: "of V_DS,max",
    source: "Common practice: keep the switch peak, π × the supply in this driver (Kazimierczuk & \
             Czarkowski, Resonant Power Converters, 2nd ed., 2011), below 80 % of the rating to leave \
             room for ringing",
};

pub const SWITCH_DEFAULT_TJ_MAX_C: Threshold = Threshold {
    name: "switch-default-tj-max",
    value: 150.0,
    unit: "°C",
    source: "Common practice: 150 °C is the usual junction maximum of silicon MOSFETs",
};

pub const SWITCH_TJ_WARNING_BAND_K: Threshold = Threshold {
    name: "switch-tj-warning-band",
    value: 25.0,
    unit: "K",
    source: "Common practice: warn within 25 K of the junction maximum",
};

pub const GATE_DEFAULT_VGS_MAX_V: Threshold = Threshold {
    name: "gate-default-vgs-max",
    value: 20.0,
    unit: "V",
    source: "Common practice: most MOSFETs allow ±20 V gate to source",
};

pub const GATE_RESISTOR_WARNING_FRACTION: Threshold = Threshold {
    name: "gate-resistor-warning",
    value: 0.5,
    unit: "of rated power",
    source: "Common practice: run resistors at no more than half their rated power",
};

pub const CHOKE_SATURATION_WARNING_FRACTION: Threshold = Threshold {
    name: "choke-saturation-warning",
    value: 0.8,
    unit: "of saturation current",
    source: "Common practice: warn above 80 % of the saturation current",
};

pub const CHOKE_MIN_REACTANCE_RATIO: Threshold = Threshold {
    name: "choke-min-reactance-ratio",
    value: 10.0,
    unit: "× coil reactance",
    source: "Common practice: too small a choke lets the supply current swing with the tank; keep \
             it at least 10 × the coil's reactance",
};

/// Every threshold, for a page that lists them.
pub const TABLE: [Threshold; 14] = [
    CAP_DEFAULT_MAX_TEMP_C,
    CAP_TEMP_WARNING_BAND_K,
    CAP_DEFAULT_SELF_HEATING_K,
    CAP_CURRENT_WARNING_FRACTION,
    CAP_VOLTAGE_WARNING_FRACTION,
    CAP_DRIFT_WARNING,
    CAP_DRIFT_FAILURE,
    SWITCH_VOLTAGE_WARNING_FRACTION,
    SWITCH_DEFAULT_TJ_MAX_C,
    SWITCH_TJ_WARNING_BAND_K,
    GATE_DEFAULT_VGS_MAX_V,
    GATE_RESISTOR_WARNING_FRACTION,
    CHOKE_SATURATION_WARNING_FRACTION,
    CHOKE_MIN_REACTANCE_RATIO,
];

/// Source of a limit the user gave on the part itself.
pub const PART_RATING: &str = "the part's own rating, as entered";
