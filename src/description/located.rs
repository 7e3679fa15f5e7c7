//! The located reader every input file's values go through (board
//! descriptions, machine and job profiles, stock lists): each value held to
//! an explicit range and, when it breaks it, refused at its file, line and
//! column with the field, the rule and a hint.

use serde_saphyr::{Location, Spanned};

use super::values::LengthValue;
use super::{DescriptionError, rule_error};
use crate::units::{self, Unit};

/// Reads values with the file's text at hand for located errors; bare
/// numbers are lengths in the file's `unit`.
pub struct Reader<'a> {
    /// The file's text.
    pub text: &'a str,
    /// The file's name in messages.
    pub file: &'a str,
    /// The unit of bare numbers.
    pub unit: Unit,
}

impl Reader<'_> {
    /// A rule broken at `at`.
    pub fn fail<T>(
        &self,
        at: &Location,
        field: &str,
        rule: impl Into<String>,
        hint: impl Into<String>,
    ) -> Result<T, DescriptionError> {
        Err(rule_error(self.text, self.file, at, field, rule, hint))
    }

    /// A length in mm.
    pub fn mm(&self, v: &Spanned<LengthValue>) -> f64 {
        v.value.0.to_mm(self.unit)
    }

    /// A length in (lo, hi], in mm.
    pub fn length(
        &self,
        v: &Spanned<LengthValue>,
        field: &str,
        lo: f64,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        self.length_within(v, field, (lo, false), hi, hint)
    }

    /// A length in [lo, hi], in mm.
    pub fn length_or_zero(
        &self,
        v: &Spanned<LengthValue>,
        field: &str,
        lo: f64,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        self.length_within(v, field, (lo, true), hi, hint)
    }

    /// A length from `lo` (included when `lo.1`) to `hi` (included), mm.
    fn length_within(
        &self,
        v: &Spanned<LengthValue>,
        field: &str,
        (lo, from): (f64, bool),
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        let x = self.mm(v);
        if (if from { x >= lo } else { x > lo }) && x <= hi {
            return Ok(x);
        }
        let lower = if from { "at least" } else { "more than" };
        self.fail(
            &v.referenced,
            field,
            format!(
                "is {}; it must be {lower} {} and at most {}",
                units::exact(x),
                units::exact(lo),
                units::exact(hi)
            ),
            hint,
        )
    }

    /// A plain number in [lo, hi].
    pub fn number(
        &self,
        v: &Spanned<f64>,
        field: &str,
        lo: f64,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        if v.value.is_finite() && v.value >= lo && v.value <= hi {
            return Ok(v.value);
        }
        self.fail(
            &v.referenced,
            field,
            format!("is {}; it must be between {lo} and {hi}", v.value),
            hint,
        )
    }

    /// A field that must be given (`near`: where to point when it is not).
    pub fn required<'v, T>(
        &self,
        v: &'v Option<Spanned<T>>,
        near: &Location,
        field: &str,
        hint: &str,
    ) -> Result<&'v Spanned<T>, DescriptionError> {
        match v {
            Some(s) => Ok(s),
            None => self.fail(near, field, "is missing", hint),
        }
    }

    /// A field that must not be given, and why.
    pub fn forbid<T>(
        &self,
        v: &Option<Spanned<T>>,
        field: &str,
        why: &str,
    ) -> Result<(), DescriptionError> {
        match v {
            Some(s) => self.fail(
                &s.referenced,
                field,
                format!("does not apply: {why}"),
                "remove the field",
            ),
            None => Ok(()),
        }
    }
}
