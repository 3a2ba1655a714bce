//! Errors of the battery stage: each names the mission-file table and key, what was
//! expected and how to fix it.

/// Everything that can be wrong with battery, thermal or load parameters.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum BatteryError {
    /// One value is out of its valid range.
    #[error("[{table}] {key} = {value}: expected {expected}. Fix: {fix}")]
    Parameter {
        /// Mission-file table: "battery", "thermal" or "loads".
        table: &'static str,
        /// The key.
        key: String,
        /// The value as given.
        value: String,
        /// The valid range.
        expected: &'static str,
        /// What the user can do.
        fix: &'static str,
    },
    /// Values that are valid alone contradict each other.
    #[error("[{table}] {problem}. Fix: {fix}")]
    Inconsistent {
        /// Mission-file table.
        table: &'static str,
        /// What contradicts what.
        problem: String,
        /// What the user can do.
        fix: &'static str,
    },
    /// A line of a measured temperature series cannot be used.
    #[error("ambient temperature series, line {line}: {problem}. Fix: {fix}")]
    Series {
        /// 1-based line number.
        line: usize,
        /// What is wrong.
        problem: String,
        /// What the user can do.
        fix: &'static str,
    },
}

/// Checks that `value` is finite and in `[lo, hi]`; otherwise a [`BatteryError::Parameter`].
pub(crate) fn check_range(
    table: &'static str,
    key: &str,
    value: f64,
    (lo, hi): (f64, f64),
    expected: &'static str,
    fix: &'static str,
) -> Result<f64, BatteryError> {
    if value.is_finite() && value >= lo && value <= hi {
        Ok(value)
    } else {
        Err(BatteryError::Parameter {
            table,
            key: key.to_string(),
            value: value.to_string(),
            expected,
            fix,
        })
    }
}
