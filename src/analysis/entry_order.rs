//! The order of the fields of the run page's entry form: electrical first, then each part's
//! temperature, then the room and the water, unless the user arranged them otherwise for the
//! revision (the order they read the meters in).

use crate::channel::Channel;

/// Where a channel goes when the user has not said: what the supply and the meters show first,
/// then the parts' temperatures, then ambient and water.
fn default_rank(channel: Channel) -> u8 {
    match channel {
        Channel::SupplyVoltage => 0,
        Channel::SupplyCurrent => 1,
        Channel::Frequency => 2,
        Channel::TankVoltage => 3,
        Channel::PartTemp { .. } => 4,
        Channel::AmbientTemp => 5,
        Channel::WaterTemp => 6,
    }
}

/// The channels in use in the order of their fields: the saved order first (names no longer in
/// use skipped), then the rest in the default order.
pub fn entry_order(in_use: &[Channel], saved: &[String]) -> Vec<Channel> {
    let mut rest: Vec<Channel> = in_use.to_vec();
    rest.sort_by_key(|c| default_rank(*c));
    let mut order = Vec::with_capacity(rest.len());
    for name in saved {
        if let Some(at) = rest.iter().position(|c| c.to_string() == *name) {
            order.push(rest.remove(at));
        }
    }
    order.extend(rest);
    order
}

/// The order with one channel moved a place earlier (the first stays first).
pub fn move_earlier(order: &[Channel], channel: &str) -> Option<Vec<Channel>> {
    let at = order.iter().position(|c| c.to_string() == channel)?;
    let mut moved = order.to_vec();
    if at > 0 {
        moved.swap(at - 1, at);
    }
    Some(moved)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parts::Role;

    const CAP: Channel = Channel::PartTemp {
        role: Role::TankCapacitor,
        index: None,
    };

    #[test]
    fn electrical_first_then_parts_then_the_room() {
        let order = entry_order(
            &[
                Channel::AmbientTemp,
                CAP,
                Channel::Frequency,
                Channel::SupplyVoltage,
            ],
            &[],
        );
        assert_eq!(
            order,
            [
                Channel::SupplyVoltage,
                Channel::Frequency,
                CAP,
                Channel::AmbientTemp
            ]
        );
    }

    #[test]
    fn a_saved_order_wins_and_forgets_channels_no_longer_logged() {
        let saved = ["temp.tank_capacitor".to_string(), "water_temp".into()];
        let order = entry_order(&[Channel::SupplyVoltage, CAP], &saved);
        assert_eq!(order, [CAP, Channel::SupplyVoltage]);
    }

    #[test]
    fn moving_a_field_earlier() {
        let order = [Channel::SupplyVoltage, Channel::Frequency, CAP];
        let moved = move_earlier(&order, "temp.tank_capacitor").unwrap();
        assert_eq!(moved, [Channel::SupplyVoltage, CAP, Channel::Frequency]);
        assert_eq!(move_earlier(&order, "supply_voltage").unwrap(), order);
        assert!(move_earlier(&order, "water_temp").is_none());
    }
}
