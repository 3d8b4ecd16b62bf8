//! The steady part of a run and the operating point the model is evaluated at.
//!
//! Steady part [practice]: a self-oscillating driver draws a start-up surge (the chokes charge,
//! the tank builds up), then settles. The steady part starts at the first supply-current reading
//! within 10 % of the median current of the second half of the run's current readings, and
//! lasts to the end of the run. Without current readings it is the last two thirds of the run's
//! time span (a start-up transient rarely lasts a third of a bench run).

use crate::analysis::model::{OperatingPoint, PartTemperatures};
use crate::analysis::reading::Reading;
use crate::analysis::series::{median, part_channels, samples, time_span};
use crate::channel::Channel;
use crate::parts::Role;

/// Band around the settled current that counts as settled.
const SETTLED_CURRENT_BAND: f64 = 0.10;
/// Share of the run treated as steady when there is no current to judge by.
const STEADY_SHARE_WITHOUT_CURRENT: f64 = 2.0 / 3.0;

/// The steady part of a run, from `start_s` to `end_s` inclusive.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SteadyWindow {
    pub start_s: f64,
    pub end_s: f64,
}

impl SteadyWindow {
    fn contains(&self, t_s: f64) -> bool {
        t_s >= self.start_s && t_s <= self.end_s
    }
}

/// The steady part of a run (see the module doc). `None` without readings.
pub fn steady_window(readings: &[Reading]) -> Option<SteadyWindow> {
    let (first_s, end_s) = time_span(readings)?;
    let fallback = SteadyWindow {
        start_s: end_s - STEADY_SHARE_WITHOUT_CURRENT * (end_s - first_s),
        end_s,
    };
    let current = samples(readings, Channel::SupplyCurrent);
    let later_half = &current[current.len() / 2..];
    let Some(settled_a) = median(later_half.iter().map(|s| s.1)) else {
        return Some(fallback);
    };
    let band_a = SETTLED_CURRENT_BAND * settled_a.abs();
    Some(
        current
            .iter()
            .find(|s| (s.1 - settled_a).abs() <= band_a)
            .map_or(fallback, |s| SteadyWindow {
                start_s: s.0,
                end_s,
            }),
    )
}

/// Median of a channel over the steady window, else over the whole run.
fn steady_median(readings: &[Reading], channel: Channel, window: SteadyWindow) -> Option<f64> {
    let all = samples(readings, channel);
    median(all.iter().filter(|s| window.contains(s.0)).map(|s| s.1))
        .or_else(|| median(all.iter().map(|s| s.1)))
}

/// The latest temperature of the role's hottest unit: each of the role's channels
/// (`temp.role`, `temp.role.n`) contributes its latest reading, and the highest of those counts.
/// Units are read one after another at the bench, so "latest" is per channel, not one instant.
pub fn latest_role_temperature_c(readings: &[Reading], role: Role) -> Option<f64> {
    part_channels(readings)
        .into_iter()
        .filter(|c| c.role() == Some(role))
        .filter_map(|c| samples(readings, c).last().map(|s| s.1))
        .max_by(f64::total_cmp)
}

/// The operating point of a run for the model: median supply voltage, current and frequency
/// over the steady part, median ambient over the run, latest temperature per role. Without a
/// supply-voltage reading the run's supply setting stands in; without either, `None`.
pub fn operating_point(
    readings: &[Reading],
    supply_setting_v: Option<f64>,
) -> Option<OperatingPoint> {
    let window = steady_window(readings);
    let steady = |channel| window.and_then(|w| steady_median(readings, channel, w));
    let supply_voltage_v =
        steady(Channel::SupplyVoltage).or(supply_setting_v.filter(|v| v.is_finite()))?;
    // A zero frequency reading records "not oscillating", not a frequency.
    let frequency_hz = window.and_then(|w| {
        let f = samples(readings, Channel::Frequency);
        let running = |s: &&(f64, f64)| s.1 > 0.0;
        median(
            f.iter()
                .filter(running)
                .filter(|s| w.contains(s.0))
                .map(|s| s.1),
        )
        .or_else(|| median(f.iter().filter(running).map(|s| s.1)))
    });
    let latest = |role| latest_role_temperature_c(readings, role);
    Some(OperatingPoint {
        supply_voltage_v,
        supply_current_a: steady(Channel::SupplyCurrent),
        frequency_hz,
        ambient_c: median(samples(readings, Channel::AmbientTemp).iter().map(|s| s.1)),
        temperatures_c: PartTemperatures {
            tank_capacitor: latest(Role::TankCapacitor),
            switch: latest(Role::Switch),
            work_coil: latest(Role::WorkCoil),
            choke: latest(Role::Choke),
            gate_resistor: latest(Role::GateResistor),
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp(role: Role, index: Option<u32>) -> Channel {
        Channel::PartTemp { role, index }
    }

    /// A run with a start-up surge: current 0 → 18 → 14 A over the first 15 s, then 10 A ± 0.2,
    /// and the supply sagging from 24.4 V to 23.8 V while it surges.
    fn run_with_start_up() -> Vec<Reading> {
        let mut r = Vec::new();
        for (t, i, v) in [(0.0, 0.0, 24.4), (5.0, 18.0, 23.2), (10.0, 14.0, 23.5)] {
            r.push(Reading::new(t, Channel::SupplyCurrent, i));
            r.push(Reading::new(t, Channel::SupplyVoltage, v));
        }
        for k in 0..12 {
            let t = 15.0 + 10.0 * k as f64;
            let wiggle = [0.2, -0.1, 0.0, -0.2][k % 4];
            r.push(Reading::new(t, Channel::SupplyCurrent, 10.0 + wiggle));
            r.push(Reading::new(
                t,
                Channel::SupplyVoltage,
                24.0 - wiggle / 10.0,
            ));
            r.push(Reading::new(
                t,
                Channel::Frequency,
                150_000.0 + 100.0 * wiggle,
            ));
        }
        r.push(Reading::new(0.0, Channel::AmbientTemp, 22.0));
        r.push(Reading::new(120.0, Channel::AmbientTemp, 23.0));
        r
    }

    #[test]
    fn steady_part_starts_after_the_surge() {
        // Second half of the currents: 10.0 ± 0.2 A, median 10.0 A; the first reading within
        // 10 % (9–11 A) is the one at 15 s: 18 A and 14 A are outside the band.
        let window = steady_window(&run_with_start_up()).unwrap();
        assert_eq!(
            window,
            SteadyWindow {
                start_s: 15.0,
                end_s: 125.0
            }
        );
    }

    #[test]
    fn medians_over_the_steady_part() {
        let op = operating_point(&run_with_start_up(), Some(24.0)).unwrap();
        // Steady currents: three each of 10.2, 9.9, 10.0, 9.8 → median (9.9 + 10.0)/2 = 9.95 A.
        // Over the whole run the surge would pull it to 10.0 A.
        assert!((op.supply_current_a.unwrap() - 9.95).abs() < 1e-12);
        // Voltages mirror the wiggle: 23.98, 24.01, 24.00, 24.02 → median 24.005 V.
        assert!((op.supply_voltage_v - 24.005).abs() < 1e-12);
        assert!((op.frequency_hz.unwrap() - 149_995.0).abs() < 1e-6);
        assert_eq!(op.ambient_c, Some(22.5));
    }

    #[test]
    fn latest_temperature_of_the_hottest_unit() {
        let r = vec![
            Reading::new(10.0, temp(Role::TankCapacitor, Some(1)), 60.0),
            Reading::new(20.0, temp(Role::TankCapacitor, Some(1)), 55.0),
            Reading::new(15.0, temp(Role::TankCapacitor, Some(2)), 58.0),
            Reading::new(5.0, temp(Role::TankCapacitor, None), 40.0),
            Reading::new(5.0, temp(Role::Switch, None), 45.0),
        ];
        // Latest per unit: 55 (unit 1), 58 (unit 2), 40 (role) → hottest 58 °C.
        assert_eq!(
            latest_role_temperature_c(&r, Role::TankCapacitor),
            Some(58.0)
        );
        let op = operating_point(&r, Some(12.0)).unwrap();
        assert_eq!(op.temperatures_c.switch, Some(45.0));
        assert_eq!(op.temperatures_c.choke, None);
        // No supply-voltage reading: the run's supply setting stands in.
        assert_eq!(op.supply_voltage_v, 12.0);
        assert_eq!(op.supply_current_a, None);
        assert!(operating_point(&r, None).is_none());
    }

    #[test]
    fn without_current_the_last_two_thirds_are_steady() {
        let r = vec![
            Reading::new(0.0, Channel::SupplyVoltage, 30.0),
            Reading::new(30.0, Channel::SupplyVoltage, 24.0),
            Reading::new(60.0, Channel::SupplyVoltage, 24.2),
            Reading::new(90.0, Channel::SupplyVoltage, 24.4),
        ];
        assert_eq!(steady_window(&r).unwrap().start_s, 30.0);
        assert!((operating_point(&r, None).unwrap().supply_voltage_v - 24.2).abs() < 1e-12);
    }
}
