//! The analysis: lag-corrected magnet temperature, the reversible coefficient with its
//! uncertainty budget, the irreversible loss, Br from geometry, and the verdict.
//!
//! Method (hardware-notes/method.md has the full account), as named steps:
//! [`prepare`] refers the flux to the gap at 20 °C; [`lag_estimate`] finds the time constant
//! that makes the heating and cooling branches coincide (or, in a Curie sweep, [`curie`] finds
//! the collapse); [`fit_data`] chooses the points and [`alpha`] fits
//! B(T) = B20·(1 + α(T − 20) + γ(T − 20)²) ([`model`]) by QR least squares with its budget;
//! [`loss`] compares the settled readings before and after the excursion at one temperature;
//! [`judge`] turns the numbers into Br, the family ([`families`]) and the verdict.

pub mod alpha;
pub mod branch_loss;
pub mod branch_ratio;
pub mod budget;
pub mod check_kind;
pub mod curie;
pub mod cycle_loss;
pub mod cycle_total;
pub mod cycles;
pub mod drift;
pub mod fit_data;
pub mod fixture_ref;
pub mod geometry;
pub mod judge;
pub mod lag;
pub mod lag_estimate;
pub mod layout;
pub mod loss;
pub mod loss_verdict;
pub mod lsq;
pub mod model;
pub mod prepare;
pub mod result;
pub mod segments;
pub mod verdict;

pub mod context;
pub mod coverage;
pub mod pipeline;

pub use context::{AnalysisError, Context, DEFAULT_TC_GAIN_PCT};
pub use pipeline::{analyze, analyze_traced};
pub use result::{Analysis, BudgetLine, CycleResult, Traces};
pub use segments::MIN_SPAN_K;
