//! One module per lint rule; each file opens with the rule's documentation.

pub mod clamp_too_weak;
pub mod conductor_under_rated;
pub mod expectation_violated;
pub mod figure_not_derived;
pub mod limit_loop_analysis;
pub mod limit_within_load;
pub mod missing_fault_case;
pub mod pass_device_weak;
pub mod short_overheat;
pub mod slow_start;
pub mod supply_surge_exceeded;
pub mod tolerance_missing;
pub mod trip_uncharacterised;
pub mod undervoltage_threshold_in_regulation;
pub mod unlimited_surge;
pub mod wire_rated_at_fusing;
