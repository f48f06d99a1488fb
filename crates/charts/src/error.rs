//! The one error type of the crate. Messages are one lowercase line naming the
//! field, the value and what is allowed.

use std::fmt;

/// Why a chart could not be drawn.
#[derive(Debug, Clone, PartialEq)]
pub enum ChartError {
    /// A required series has no points.
    EmptyData {
        /// The empty field.
        field: &'static str,
    },
    /// Two series that must have the same length do not.
    LengthMismatch {
        /// The field whose length is wrong.
        field: &'static str,
        /// The length it must have.
        expected: usize,
        /// The length it has.
        got: usize,
    },
    /// A value outside what the chart can show (e.g. a non-positive radius on a log axis).
    InvalidValue {
        /// The field holding it.
        field: &'static str,
        /// The value.
        value: f64,
        /// What is allowed, e.g. "> 0".
        allowed: &'static str,
    },
    /// The drawing area is too small to hold the axes.
    AreaTooSmall {
        /// Width [px].
        width: u32,
        /// Height [px].
        height: u32,
    },
    /// The drawing back end failed (e.g. a font it could not find).
    Drawing {
        /// The back end's message.
        message: String,
    },
    /// PNG encoding failed.
    Png {
        /// The encoder's message.
        message: String,
    },
}

impl fmt::Display for ChartError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ChartError::EmptyData { field } => {
                write!(f, "{field} must have at least one point, got none")
            }
            ChartError::LengthMismatch {
                field,
                expected,
                got,
            } => {
                write!(f, "{field} must have {expected} entries, got {got}")
            }
            ChartError::InvalidValue {
                field,
                value,
                allowed,
            } => write!(f, "{field} must be {allowed}, got {value}"),
            ChartError::AreaTooSmall { width, height } => {
                write!(
                    f,
                    "drawing area must be at least 60 x 45 px for the axes, got {width} x {height}"
                )
            }
            ChartError::Drawing { message } => write!(
                f,
                "drawing failed: {}",
                message.to_lowercase().trim_end_matches('.')
            ),
            ChartError::Png { message } => write!(
                f,
                "png encoding failed: {}",
                message.to_lowercase().trim_end_matches('.')
            ),
        }
    }
}

impl std::error::Error for ChartError {}

/// Check that `values` has `expected` entries.
pub(crate) fn check_length<T>(
    field: &'static str,
    values: &[T],
    expected: usize,
) -> Result<(), ChartError> {
    if values.len() == expected {
        Ok(())
    } else {
        Err(ChartError::LengthMismatch {
            field,
            expected,
            got: values.len(),
        })
    }
}

/// Check that radii (or any log-axis coordinates) are positive, finite and increasing.
pub(crate) fn check_increasing_positive(
    field: &'static str,
    values: &[f64],
) -> Result<(), ChartError> {
    if values.is_empty() {
        return Err(ChartError::EmptyData { field });
    }
    for (i, &v) in values.iter().enumerate() {
        if !(v.is_finite() && v > 0.0) {
            return Err(ChartError::InvalidValue {
                field,
                value: v,
                allowed: "finite and > 0",
            });
        }
        if i > 0 && v <= values[i - 1] {
            return Err(ChartError::InvalidValue {
                field,
                value: v,
                allowed: "strictly increasing",
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_are_one_lowercase_line() {
        let e = ChartError::InvalidValue {
            field: "radius_au",
            value: -1.0,
            allowed: "finite and > 0",
        };
        assert_eq!(e.to_string(), "radius_au must be finite and > 0, got -1");
        let e = ChartError::Drawing {
            message: "FontUnavailable.".into(),
        };
        assert_eq!(e.to_string(), "drawing failed: fontunavailable");
    }
}
