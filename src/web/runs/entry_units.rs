//! The units of the bench entry fields: what a bare number means in each (the rule itself is
//! `checks::readings::typed_value`).

use crate::channel::Channel;

pub(super) use crate::checks::readings::unit_of as unit_for;

/// The unit shown beside an entry field: the frequency field reads a bare number under 10,000 as
/// kHz (the numeric keyboard of a phone has no `k`); every other field its SI unit.
pub(super) fn entry_unit(channel: Channel) -> &'static str {
    match channel {
        Channel::Frequency => "kHz",
        other => other.quantity().unit(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_frequency_field_is_labelled_khz() {
        assert_eq!(entry_unit(Channel::Frequency), "kHz");
        assert_eq!(entry_unit(Channel::SupplyCurrent), "A");
    }
}
