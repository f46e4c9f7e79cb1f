//! Planning: contact windows, close approaches, schedules and exports.

pub mod screen;
