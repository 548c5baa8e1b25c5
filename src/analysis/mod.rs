//! Selection-function analyses on top of the engine: per-object detectability with angles
//! redrawn, bias maps over (ϖ, Ω), the bias-aware clustering test, model comparison by
//! likelihood, and cadence yields (their statistics are `crate::statistics`).

pub mod bias_map;
pub mod bias_map_tables;
pub mod circular;
pub mod cluster_tables;
pub mod cluster_test;
pub mod compare;
pub mod comparison;
pub mod detectability;
pub mod likelihood;
pub mod marginals;
pub mod model_sample;
pub mod pooled_p;
pub mod selection;
pub mod space;
pub mod trial_selection;
pub mod trials;
pub mod two_sample;
pub mod yield_tables;
pub mod yields;
