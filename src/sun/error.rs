//! Errors of the sun stage: each names the parameter or input line, what was expected and
//! how to fix it.

/// Everything that can go wrong in sun position, irradiance, panel or weather input.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SunError {
    /// A parameter is outside its physical or supported range.
    #[error("{name} = {value}: expected {expected}. Fix: {fix}")]
    Parameter {
        /// The parameter's name as the user wrote it (key or flag).
        name: &'static str,
        /// The value given.
        value: String,
        /// The accepted range or form.
        expected: &'static str,
        /// What the user can do.
        fix: &'static str,
    },
    /// A line of a weather or clearness text input cannot be used.
    #[error("line {line}: {detail}. Fix: {fix}")]
    Input {
        /// One-based line number in the text.
        line: usize,
        /// What is wrong.
        detail: String,
        /// What the user can do.
        fix: String,
    },
}

impl SunError {
    /// A parameter error for `name` with `value` outside `expected`.
    pub fn parameter(
        name: &'static str,
        value: f64,
        expected: &'static str,
        fix: &'static str,
    ) -> SunError {
        SunError::Parameter {
            name,
            value: value.to_string(),
            expected,
            fix,
        }
    }
}

/// Checks that `value` is finite and within `[lo, hi]`.
pub(crate) fn check_range(
    name: &'static str,
    value: f64,
    lo: f64,
    hi: f64,
    expected: &'static str,
    fix: &'static str,
) -> Result<f64, SunError> {
    if value.is_finite() && (lo..=hi).contains(&value) {
        Ok(value)
    } else {
        Err(SunError::parameter(name, value, expected, fix))
    }
}
