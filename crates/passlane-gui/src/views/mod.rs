//! One module per view. Each view is a struct holding its own caches, with
//! `fn ui(&mut self, ui, state)`; it rebuilds a cache only when the inputs the
//! cache was made from change (document revision, cursor bucket, settings).

pub mod approaches;
pub mod avoid;
pub mod cdm_trend;
pub mod fleet;
pub mod map;
pub mod passlist;
pub mod plan;
pub mod settings;
pub mod sky;
pub mod stations;
pub mod timeline;
