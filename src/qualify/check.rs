//! One comparison of an observed value with its reference, and the verdict it gives. The verdict is
//! computed here from the numbers alone, so a case cannot report "passed" for a value outside its
//! tolerance (unit tests below feed values just inside and just outside).

use serde::Serialize;

/// An observed value against its reference.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Comparison {
    /// |observed − expected| ≤ tolerance.
    Within {
        /// The reference value.
        expected: f64,
        /// The value this installation computed (null in JSON when it is not a number).
        observed: f64,
        /// The largest allowed absolute difference.
        tolerance: f64,
    },
    /// observed ≥ bound.
    AtLeast {
        /// The lower bound.
        bound: f64,
        /// The value this installation computed.
        observed: f64,
    },
    /// observed < bound.
    Below {
        /// The (exclusive) upper bound.
        bound: f64,
        /// The value this installation computed.
        observed: f64,
    },
    /// The observed text equals the expected text exactly (a digest, a set of names, an outcome).
    Exact {
        /// The reference.
        expected: String,
        /// What this installation computed.
        observed: String,
    },
}

impl Comparison {
    /// Whether the observed value meets the reference. A value that is not a number never does.
    pub fn passed(&self) -> bool {
        match self {
            Comparison::Within {
                expected,
                observed,
                tolerance,
            } => observed.is_finite() && (observed - expected).abs() <= *tolerance,
            Comparison::AtLeast { bound, observed } => observed.is_finite() && observed >= bound,
            Comparison::Below { bound, observed } => observed.is_finite() && observed < bound,
            Comparison::Exact { expected, observed } => expected == observed,
        }
    }

    /// Whether the comparison is exact (no tolerance).
    pub fn is_exact(&self) -> bool {
        matches!(self, Comparison::Exact { .. })
    }

    /// The expected value as shown in the record.
    pub fn expected_text(&self) -> String {
        match self {
            Comparison::Within { expected, .. } => number(*expected),
            Comparison::AtLeast { bound, .. } => format!("≥ {}", number(*bound)),
            Comparison::Below { bound, .. } => format!("< {}", number(*bound)),
            Comparison::Exact { expected, .. } => expected.clone(),
        }
    }

    /// The observed value as shown in the record.
    pub fn observed_text(&self) -> String {
        match self {
            Comparison::Within { observed, .. }
            | Comparison::AtLeast { observed, .. }
            | Comparison::Below { observed, .. } => number(*observed),
            Comparison::Exact { observed, .. } => observed.clone(),
        }
    }

    /// The tolerance as shown in the record.
    pub fn tolerance_text(&self) -> String {
        match self {
            Comparison::Within { tolerance, .. } => format!("|Δ| ≤ {}", number(*tolerance)),
            Comparison::AtLeast { .. } | Comparison::Below { .. } => "bound".into(),
            Comparison::Exact { .. } => "exact".into(),
        }
    }
}

/// A number as the record shows it: enough significant digits to see a difference at the
/// tolerances used (17 round-trips any f64), or the reason it is not a number.
pub fn number(value: f64) -> String {
    if value.is_nan() {
        "not a number".into()
    } else if value.is_infinite() {
        if value > 0.0 { "+∞" } else { "−∞" }.into()
    } else if value == 0.0 || (1e-4..1e6).contains(&value.abs()) {
        let text = format!("{value:.12}");
        let text = text.trim_end_matches('0').trim_end_matches('.');
        text.to_string()
    } else {
        let text = format!("{value:.12e}");
        match text.split_once('e') {
            Some((mantissa, exponent)) if mantissa.contains('.') => format!(
                "{}e{exponent}",
                mantissa.trim_end_matches('0').trim_end_matches('.')
            ),
            _ => text,
        }
    }
}

/// One named quantity of a case and its comparison.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
pub struct Measured {
    /// What was measured, e.g. `ξ_n` or `p-value`.
    pub quantity: String,
    /// The comparison with the reference.
    #[serde(flatten)]
    pub comparison: Comparison,
    /// Whether the comparison is exact (no tolerance).
    pub exact: bool,
    /// Whether it met the reference (computed from the comparison).
    pub passed: bool,
}

impl Measured {
    /// A measured quantity; its verdict comes from the comparison.
    pub fn new(quantity: impl Into<String>, comparison: Comparison) -> Measured {
        let passed = comparison.passed();
        Measured {
            quantity: quantity.into(),
            exact: comparison.is_exact(),
            comparison,
            passed,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_value_off_by_more_than_its_tolerance_fails_and_one_within_it_passes() {
        let at = |observed| Comparison::Within {
            expected: 0.5,
            observed,
            tolerance: 1e-9,
        };
        assert!(at(0.5).passed());
        assert!(at(0.5 + 0.9e-9).passed());
        assert!(!at(0.5 + 1.1e-9).passed());
        assert!(!at(0.5 - 1.1e-9).passed());
        assert!(!at(f64::NAN).passed());
        assert!(!Measured::new("x", at(0.6)).passed);
    }

    #[test]
    fn bounds_and_exact_texts_decide_as_written() {
        let at_least = |observed| Comparison::AtLeast {
            bound: 0.9,
            observed,
        };
        assert!(at_least(0.9).passed() && !at_least(0.899).passed());
        let below = |observed| Comparison::Below {
            bound: 0.06,
            observed,
        };
        assert!(below(-0.059).passed() && !below(0.06).passed() && !below(f64::NAN).passed());
        let exact = |observed: &str| Comparison::Exact {
            expected: "identified {HR, HRBP}".into(),
            observed: observed.into(),
        };
        assert!(exact("identified {HR, HRBP}").passed());
        assert!(!exact("identified {HR}").passed());
    }

    #[test]
    fn numbers_show_enough_digits_to_see_the_difference() {
        assert_eq!(number(0.5), "0.5");
        assert_eq!(number(0.0), "0");
        assert_eq!(number(4.132570657855842e-109), "4.132570657856e-109");
        assert_eq!(number(1e-12), "1e-12");
        assert_eq!(number(f64::NAN), "not a number");
        assert_ne!(number(0.5), number(0.5 + 2e-12));
    }
}
