//! A reading as analysis sees it.

use crate::channel::Channel;

/// One timestamped value on a channel of a run: the reading's current value (the store resolves
/// corrections before analysis). `t_s` counts from any fixed origin of the run, in seconds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Reading {
    pub t_s: f64,
    pub channel: Channel,
    pub value: f64,
}

impl Reading {
    pub fn new(t_s: f64, channel: Channel, value: f64) -> Self {
        Reading {
            t_s,
            channel,
            value,
        }
    }
}
