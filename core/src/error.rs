//! Typed errors of the physics modules.
//!
//! Every public physics function checks its inputs and returns a
//! [`PhysicsError`] that names the offending quantity, its value and unit, and
//! what a valid value looks like. Nothing in the physics layer panics on bad
//! input.

use thiserror::Error;

use crate::project::limits::readable;

/// A non-physical or out-of-range input to a physics function.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum PhysicsError {
    /// A value that is NaN or infinite.
    #[error("{quantity} is not a finite number ({value}); give a finite value in {unit}")]
    NotFinite { quantity: &'static str, value: f64, unit: &'static str },
    /// A value that must be strictly positive.
    #[error("{quantity} = {v} {unit} must be greater than zero", v = readable(*.value))]
    NotPositive { quantity: &'static str, value: f64, unit: &'static str },
    /// A value that must be zero or positive.
    #[error("{quantity} = {v} {unit} must not be negative", v = readable(*.value))]
    Negative { quantity: &'static str, value: f64, unit: &'static str },
    /// A value outside the range a model is valid for.
    #[error(
        "{quantity} = {v} {unit} is outside the valid range {lo} to {hi} {unit}",
        v = readable(*.value),
        lo = readable(*.min),
        hi = readable(*.max)
    )]
    OutOfRange { quantity: &'static str, value: f64, unit: &'static str, min: f64, max: f64 },
    /// Two or more inputs that contradict each other (e.g. return ≥ supply).
    #[error("{0}")]
    Inconsistent(String),
    /// A catalog lookup that found nothing (unknown series, size, family …).
    #[error("{0}")]
    NotFound(String),
    /// Bad data in a catalog file.
    #[error("catalog {file}: {message}")]
    Catalog { file: String, message: String },
}

/// Result alias of the physics modules.
pub type PhysicsResult<T> = Result<T, PhysicsError>;

/// Input checks shared by the physics modules.
pub mod check {
    use super::PhysicsError;

    /// `value` must be finite.
    ///
    /// # Errors
    /// [`PhysicsError::NotFinite`] when it is NaN or infinite.
    pub fn finite(quantity: &'static str, value: f64, unit: &'static str) -> Result<f64, PhysicsError> {
        if value.is_finite() { Ok(value) } else { Err(PhysicsError::NotFinite { quantity, value, unit }) }
    }

    /// `value` must be finite and > 0.
    ///
    /// # Errors
    /// [`PhysicsError::NotFinite`] or [`PhysicsError::NotPositive`].
    pub fn positive(quantity: &'static str, value: f64, unit: &'static str) -> Result<f64, PhysicsError> {
        finite(quantity, value, unit)?;
        if value > 0.0 { Ok(value) } else { Err(PhysicsError::NotPositive { quantity, value, unit }) }
    }

    /// `value` must be finite and ≥ 0.
    ///
    /// # Errors
    /// [`PhysicsError::NotFinite`] or [`PhysicsError::Negative`].
    pub fn non_negative(quantity: &'static str, value: f64, unit: &'static str) -> Result<f64, PhysicsError> {
        finite(quantity, value, unit)?;
        if value >= 0.0 { Ok(value) } else { Err(PhysicsError::Negative { quantity, value, unit }) }
    }

    /// `value` must be finite and within `[min, max]`.
    ///
    /// # Errors
    /// [`PhysicsError::NotFinite`] or [`PhysicsError::OutOfRange`].
    pub fn in_range(
        quantity: &'static str,
        value: f64,
        unit: &'static str,
        min: f64,
        max: f64,
    ) -> Result<f64, PhysicsError> {
        finite(quantity, value, unit)?;
        if (min..=max).contains(&value) {
            Ok(value)
        } else {
            Err(PhysicsError::OutOfRange { quantity, value, unit, min, max })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_the_quantity_and_value() {
        let e = check::positive("inner diameter", -0.01, "m").unwrap_err();
        let text = e.to_string();
        assert!(text.contains("inner diameter"), "{text}");
        assert!(text.contains("-0.01"), "{text}");
        let e = check::in_range("supply temperature", 120.0, "°C", 5.0, 95.0).unwrap_err();
        assert!(e.to_string().contains("5 to 95 °C"), "{e}");
        assert!(matches!(check::finite("x", f64::NAN, "m"), Err(PhysicsError::NotFinite { .. })));
        assert!(check::non_negative("length", 0.0, "m").is_ok());
    }
}
