//! One file per command.

pub mod feed;
