//! The temperature each part's readings are judged against.

use serde::Serialize;

use crate::parts::{Parts, Role};

/// Film tank capacitors are "usually rated 85 °C" (film capacitor datasheet practice); used when
/// the revision gives no rating.
pub const TANK_CAPACITOR_ASSUMED_MAX_C: f64 = 85.0;

/// Why a limit has the value it has.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LimitBasis {
    /// The part's own rated maximum.
    Rated,
    /// No rating given: 85 °C assumed for a tank capacitor.
    AssumedCapacitorRating,
    /// Switch case temperature at which the junction reaches tj_max at this run's loss.
    SwitchCaseAtLoss,
    /// Switch junction maximum, used for the case as the loss or R_thJC is unknown.
    SwitchJunctionMax,
}

impl LimitBasis {
    pub fn describe(self) -> &'static str {
        match self {
            LimitBasis::Rated => "the part's rated maximum",
            LimitBasis::AssumedCapacitorRating => {
                "85 °C assumed: film capacitors are usually rated 85 °C (makers' data)"
            }
            LimitBasis::SwitchCaseAtLoss => {
                "the case temperature at which the junction reaches its maximum: the junction maximum \
                 less the loss times the junction-to-case thermal resistance"
            }
            LimitBasis::SwitchJunctionMax => {
                "the junction maximum itself: the switch loss or its junction-to-case thermal resistance \
                 is unknown, so this limit is optimistic"
            }
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PartLimit {
    pub limit_c: f64,
    pub basis: LimitBasis,
}

/// Case temperature at which the junction reaches its maximum: T_c = T_j,max − P·R_thJC, from
/// T_j = T_c + P·R_thJC [derived].
pub fn switch_case_limit_c(tj_max_c: f64, switch_loss_w: f64, rth_jc_k_per_w: f64) -> f64 {
    tj_max_c - switch_loss_w * rth_jc_k_per_w
}

/// The limit for a part of `role`; `switch_loss_w` is the conduction loss of one switch at this
/// run's operating point, when the model knows it.
pub fn part_limit(parts: &Parts, role: Role, switch_loss_w: Option<f64>) -> Option<PartLimit> {
    match role {
        Role::TankCapacitor => {
            let rated = parts.max_temp_c(role).map(|limit_c| PartLimit {
                limit_c,
                basis: LimitBasis::Rated,
            });
            Some(rated.unwrap_or(PartLimit {
                limit_c: TANK_CAPACITOR_ASSUMED_MAX_C,
                basis: LimitBasis::AssumedCapacitorRating,
            }))
        }
        Role::Switch => {
            let switch = parts.switch.as_ref()?;
            let tj_max_c = switch.tj_max_c?;
            let loss = switch_loss_w.filter(|p| p.is_finite() && *p >= 0.0);
            Some(match (loss, switch.rth_jc_k_per_w) {
                (Some(p), Some(rth)) => PartLimit {
                    limit_c: switch_case_limit_c(tj_max_c, p, rth),
                    basis: LimitBasis::SwitchCaseAtLoss,
                },
                _ => PartLimit {
                    limit_c: tj_max_c,
                    basis: LimitBasis::SwitchJunctionMax,
                },
            })
        }
        _ => parts.max_temp_c(role).map(|limit_c| PartLimit {
            limit_c,
            basis: LimitBasis::Rated,
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parts::{Switch, TankCapacitor};

    #[test]
    fn switch_case_limit_subtracts_the_junction_rise() {
        // Derived: 2.817 W through 0.8 K/W is a 2.25 K rise; tj_max 150 °C.
        let parts = Parts {
            switch: Some(Switch {
                tj_max_c: Some(150.0),
                rth_jc_k_per_w: Some(0.8),
                ..Switch::default()
            }),
            ..Parts::default()
        };
        let limit = part_limit(&parts, Role::Switch, Some(2.817)).unwrap();
        assert!((limit.limit_c - 147.7464).abs() < 1e-9);
        assert_eq!(limit.basis, LimitBasis::SwitchCaseAtLoss);
        let unknown = part_limit(&parts, Role::Switch, None).unwrap();
        assert_eq!(
            (unknown.limit_c, unknown.basis),
            (150.0, LimitBasis::SwitchJunctionMax)
        );
    }

    #[test]
    fn tank_capacitor_without_rating_assumes_85_c() {
        // Film capacitor datasheet practice: rated temperature usually 85 °C.
        let limit = part_limit(&Parts::default(), Role::TankCapacitor, None).unwrap();
        assert_eq!(limit.limit_c, 85.0);
        assert_eq!(limit.basis, LimitBasis::AssumedCapacitorRating);
        let parts = Parts {
            tank_capacitor: Some(TankCapacitor {
                label: None,
                capacitance_f: 0.33e-6,
                count: 6,
                dissipation_factor: None,
                esr_ohm: None,
                voltage_rating_vrms: None,
                current_rating_arms: None,
                max_temp_c: Some(105.0),
                self_heating_limit_k: None,
            }),
            ..Parts::default()
        };
        assert_eq!(
            part_limit(&parts, Role::TankCapacitor, None)
                .unwrap()
                .limit_c,
            105.0
        );
        assert!(part_limit(&parts, Role::Choke, None).is_none());
    }
}
