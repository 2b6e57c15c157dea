//! One module per lint rule; each file opens with the rule's documentation.

pub mod clamp_too_weak;
pub mod conductor_under_rated;
pub mod expectation_violated;
pub mod limit_loop_analysis;
pub mod limit_within_load;
pub mod missing_fault_case;
pub mod short_overheat;
pub mod slow_start;
pub mod tolerance_missing;
pub mod trip_uncharacterised;
pub mod unlimited_surge;
