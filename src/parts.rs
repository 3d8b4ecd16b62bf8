//! The parts contract of a revision: one object per role, SI units, snake_case.
//!
//! This is the shape the API, export and import speak, and the input of the model. Optional
//! fields are `None` when the user did not give them; the model then
//! leaves the quantities that need them absent instead of guessing.

use serde::{Deserialize, Serialize};

/// Every part of one revision of the driver, by role.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Parts {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tank_capacitor: Option<TankCapacitor>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub work_coil: Option<WorkCoil>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub choke: Option<Choke>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub switch: Option<Switch>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gate_resistor: Option<GateResistor>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gate_clamp: Option<GateClamp>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub supply: Option<Supply>,
    /// Anything else on the board (diodes, fans, heat sinks): logged, not modelled.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub other: Vec<OtherPart>,
}

/// The capacitor bank of the tank: `count` equal units in parallel.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TankCapacitor {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    /// Capacitance of one unit.
    pub capacitance_f: f64,
    #[serde(default = "one")]
    pub count: u32,
    /// tan δ at the operating frequency; takes precedence over `esr_ohm` when both are given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dissipation_factor: Option<f64>,
    /// Equivalent series resistance of one unit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub esr_ohm: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub voltage_rating_vrms: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub current_rating_arms: Option<f64>,
    /// Rated (upper category) temperature of the unit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_temp_c: Option<f64>,
    /// The part's own allowed self-heating over ambient, when its maker gives one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub self_heating_limit_k: Option<f64>,
}

/// The work coil: an inductance, or the geometry to compute one from.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WorkCoil {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    /// Measured inductance; when absent the model uses Wheeler's formula on the geometry.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub inductance_h: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub turns: Option<f64>,
    /// Mean diameter, to the conductor centres.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mean_diameter_m: Option<f64>,
    /// Winding length.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub length_m: Option<f64>,
    /// Both leads together, from the coil to the tank capacitors.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lead_length_m: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub conductor: Option<Conductor>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_temp_c: Option<f64>,
}

/// The coil's conductor.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum Conductor {
    /// Solid round wire, by diameter or by American Wire Gauge.
    Round {
        #[serde(default, skip_serializing_if = "Option::is_none")]
        diameter_m: Option<f64>,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        awg: Option<u32>,
    },
    /// Tube (often water-cooled copper pipe).
    Tube { outer_diameter_m: f64, wall_m: f64 },
}

/// The supply chokes: `count` equal chokes, one to each drain.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Choke {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    pub inductance_h: f64,
    #[serde(default = "two")]
    pub count: u32,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dcr_ohm: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub saturation_current_a: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_temp_c: Option<f64>,
}

/// One of the two switching MOSFETs (the driver always has two equal ones).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Switch {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub vds_max_v: Option<f64>,
    /// R_DS(on) at 25 °C junction.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rds_on_ohm: Option<f64>,
    /// Rise of R_DS(on) per kelvin, in percent, compounded from 25 °C.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rds_tempco_pct_per_k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tj_max_c: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rth_jc_k_per_w: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub vgs_max_v: Option<f64>,
}

/// One of the two gate resistors fed from the supply.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GateResistor {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    pub resistance_ohm: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub power_rating_w: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_temp_c: Option<f64>,
}

/// One of the two gate zener clamps.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GateClamp {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    pub zener_voltage_v: f64,
}

/// The bench supply this revision is meant to run from.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Supply {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub nominal_voltage_v: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub current_limit_a: Option<f64>,
}

/// A part that the model does not use but the logbook keeps.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OtherPart {
    pub label: String,
    #[serde(default = "one")]
    pub quantity: u32,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_temp_c: Option<f64>,
}

fn one() -> u32 {
    1
}

fn two() -> u32 {
    2
}

/// The roles a part can have, in the order pages list them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    TankCapacitor,
    WorkCoil,
    Choke,
    Switch,
    GateResistor,
    GateClamp,
    Supply,
    Other,
}

impl Role {
    pub const ALL: [Role; 8] = [
        Role::TankCapacitor,
        Role::WorkCoil,
        Role::Choke,
        Role::Switch,
        Role::GateResistor,
        Role::GateClamp,
        Role::Supply,
        Role::Other,
    ];

    /// The snake_case name used in JSON and channel names (`temp.tank_capacitor`).
    pub fn key(self) -> &'static str {
        match self {
            Role::TankCapacitor => "tank_capacitor",
            Role::WorkCoil => "work_coil",
            Role::Choke => "choke",
            Role::Switch => "switch",
            Role::GateResistor => "gate_resistor",
            Role::GateClamp => "gate_clamp",
            Role::Supply => "supply",
            Role::Other => "other",
        }
    }

    /// How a person reads the role.
    pub fn title(self) -> &'static str {
        match self {
            Role::TankCapacitor => "Tank capacitor",
            Role::WorkCoil => "Work coil",
            Role::Choke => "Choke",
            Role::Switch => "Switch",
            Role::GateResistor => "Gate resistor",
            Role::GateClamp => "Gate clamp",
            Role::Supply => "Supply",
            Role::Other => "Other",
        }
    }

    pub fn from_key(key: &str) -> Option<Role> {
        Role::ALL.into_iter().find(|role| role.key() == key)
    }
}

impl Parts {
    /// How many physical parts of a role the revision has (the driver has two switches, two gate
    /// resistors and two clamps by its topology).
    pub fn quantity(&self, role: Role) -> u32 {
        match role {
            Role::TankCapacitor => self.tank_capacitor.as_ref().map_or(0, |c| c.count),
            Role::WorkCoil => u32::from(self.work_coil.is_some()),
            Role::Choke => self.choke.as_ref().map_or(0, |c| c.count),
            Role::Switch => 2 * u32::from(self.switch.is_some()),
            Role::GateResistor => 2 * u32::from(self.gate_resistor.is_some()),
            Role::GateClamp => 2 * u32::from(self.gate_clamp.is_some()),
            Role::Supply => u32::from(self.supply.is_some()),
            Role::Other => self.other.iter().map(|o| o.quantity).sum(),
        }
    }

    /// The rated maximum temperature of a role's parts, when given (for a switch, its junction).
    pub fn max_temp_c(&self, role: Role) -> Option<f64> {
        match role {
            Role::TankCapacitor => self.tank_capacitor.as_ref()?.max_temp_c,
            Role::WorkCoil => self.work_coil.as_ref()?.max_temp_c,
            Role::Choke => self.choke.as_ref()?.max_temp_c,
            Role::Switch => self.switch.as_ref()?.tj_max_c,
            Role::GateResistor => self.gate_resistor.as_ref()?.max_temp_c,
            Role::GateClamp | Role::Supply | Role::Other => None,
        }
    }

    /// The free-text label of a role's part, when given.
    pub fn label(&self, role: Role) -> Option<&str> {
        match role {
            Role::TankCapacitor => self.tank_capacitor.as_ref()?.label.as_deref(),
            Role::WorkCoil => self.work_coil.as_ref()?.label.as_deref(),
            Role::Choke => self.choke.as_ref()?.label.as_deref(),
            Role::Switch => self.switch.as_ref()?.label.as_deref(),
            Role::GateResistor => self.gate_resistor.as_ref()?.label.as_deref(),
            Role::GateClamp => self.gate_clamp.as_ref()?.label.as_deref(),
            Role::Supply => self.supply.as_ref()?.label.as_deref(),
            Role::Other => None,
        }
    }
}
