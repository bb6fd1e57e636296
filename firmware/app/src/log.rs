//! A small logging shim: state changes, refusals and trips go to defmt when the `defmt`
//! feature is on, and compile to nothing otherwise, so host builds stay free of it. Use them
//! as `crate::log::{fw_info, fw_warn}`.

/// Log at info level (defmt syntax).
#[cfg(feature = "defmt")]
macro_rules! fw_info {
    ($($t:tt)*) => { defmt::info!($($t)*) };
}

/// Log at info level (defmt syntax); compiled out without the `defmt` feature.
#[cfg(not(feature = "defmt"))]
macro_rules! fw_info {
    ($fmt:literal $(, $arg:expr)* $(,)?) => {{ $( let _ = &$arg; )* }};
}

/// Log at warning level (defmt syntax).
#[cfg(feature = "defmt")]
macro_rules! fw_warn {
    ($($t:tt)*) => { defmt::warn!($($t)*) };
}

/// Log at warning level (defmt syntax); compiled out without the `defmt` feature.
#[cfg(not(feature = "defmt"))]
macro_rules! fw_warn {
    ($fmt:literal $(, $arg:expr)* $(,)?) => {{ $( let _ = &$arg; )* }};
}

pub(crate) use fw_info;
pub(crate) use fw_warn;
