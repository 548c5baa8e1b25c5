//! The detection engine: every object against every visit of every survey, through a visit
//! index in time and on the sky, objects in parallel, outputs streamed in chunks.
//!
//! Where the time goes: one coarse position per object per time block (the node, from a
//! track that needs a Kepler solve only every few months), a test against the cap of that
//! block's fields, a query of its tree of caps (`caps.rs`), then an exact
//! light-time-corrected position only for candidate visits whose centre lies within the footprint's bounding
//! radius plus the object's largest possible motion since the node. Everything else is
//! bookkeeping. `Candidates::All` is the plain brute force, kept for verification.
//! Analyses that need only who discovered what (`StopRule::UntilDiscovery`) stop each survey
//! at its discovery and skip surveys that provably cannot detect the object (`reach`).

pub mod batch;
pub mod caps;
pub mod discoveries;
pub mod index;
pub mod merge;
pub mod motion;
pub mod outcome;
pub mod outputs;
pub mod parts;
pub mod pipeline;
pub mod reach;
pub mod run;
pub mod summary;
pub mod track;

pub use batch::Batch;
pub use index::{Candidates, PreparedSurvey};
pub use outcome::{Event, ObjectOutcome, SurveyOutcome};
pub use pipeline::{StopRule, observe_object};
pub use run::{ObserveOptions, ObserveReport, observe};
