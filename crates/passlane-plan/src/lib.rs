//! Planning: contact windows, close approaches, schedules and exports.

// Conjunction assessment: encounter geometry, collision probability, CDM files.
pub mod cdm;
pub mod encounter;
pub mod pc;
