//! Cells that are distinct decimal numbers as text but the same 64-bit float (`0.1` and
//! `0.1000000000000000000001`, or 17 and more significant digits): a column of such cells is
//! constant only after rounding, and the note that leaves it out must say so. `1`, `1.0` and
//! `+1e0` are one decimal number written three ways, not distinct.

/// The first number of a column, and another cell with the same float but another decimal value.
#[derive(Clone, Debug, PartialEq)]
pub struct Spellings {
    value: f64,
    text: String,
    row: usize,
    other: Option<(String, usize)>,
}

impl Spellings {
    /// Records cell `row` of a column whose number is `value`, written as `text`.
    pub fn observe(slot: &mut Option<Spellings>, text: &str, value: f64, row: usize) {
        let text = text.trim();
        match slot {
            None => {
                *slot = Some(Spellings {
                    value,
                    text: text.to_string(),
                    row,
                    other: None,
                })
            }
            Some(first) => {
                if first.other.is_none()
                    && value == first.value
                    && text != first.text
                    && decimal(text) != decimal(&first.text)
                {
                    first.other = Some((text.to_string(), row));
                }
            }
        }
    }

    /// Two distinct decimal texts of the float `value`, when both rows are kept (`kept(row)`).
    pub fn distinct_texts(&self, value: f64, kept: impl Fn(usize) -> bool) -> Option<[String; 2]> {
        let (other, row) = self.other.as_ref()?;
        (self.value == value && kept(self.row) && kept(*row))
            .then(|| [self.text.clone(), other.clone()])
    }
}

/// A decimal number's exact value in a canonical form: (negative, significant digits without
/// leading or trailing zeros, power of ten of the last digit); zero as (false, "", 0). A point or
/// a comma separates the decimals. `None` for text that is not a plain decimal number.
fn decimal(text: &str) -> Option<(bool, String, i64)> {
    let (mantissa, exponent) = match text.find(['e', 'E']) {
        Some(at) => (&text[..at], text[at + 1..].parse::<i64>().ok()?),
        None => (text, 0),
    };
    let negative = mantissa.starts_with('-');
    let mantissa = mantissa.trim_start_matches(['+', '-']);
    let (whole, fraction) = mantissa.split_once(['.', ',']).unwrap_or((mantissa, ""));
    let digits: String = whole.chars().chain(fraction.chars()).collect();
    if !digits.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let significant = digits.trim_start_matches('0');
    let trimmed = significant.trim_end_matches('0');
    if trimmed.is_empty() {
        return Some((false, String::new(), 0));
    }
    let trailing = (significant.len() - trimmed.len()) as i64;
    let power = exponent
        .checked_sub(fraction.len() as i64)?
        .checked_add(trailing)?;
    Some((negative, trimmed.to_string(), power))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_decimal_number_written_several_ways_is_one_value() {
        for (a, b) in [
            ("1", "1.0"),
            ("1", "+1e0"),
            ("0.10", ".1"),
            ("-0", "0"),
            ("1,5", "1.5"),
        ] {
            assert_eq!(decimal(a), decimal(b), "{a} {b}");
        }
        assert_eq!(decimal("120e-1"), decimal("12"));
    }

    #[test]
    fn distinct_decimals_that_round_to_one_float_are_noticed() {
        let mut slot = None;
        for (row, text) in ["0.1", "0.10", "0.1000000000000000000001", "0.1"]
            .iter()
            .enumerate()
        {
            Spellings::observe(&mut slot, text, text.parse().unwrap(), row);
        }
        let spellings = slot.unwrap();
        assert_eq!(
            spellings.distinct_texts(0.1, |_| true),
            Some(["0.1".to_string(), "0.1000000000000000000001".to_string()])
        );
        assert_eq!(spellings.distinct_texts(0.1, |r| r != 2), None);
        assert_eq!(spellings.distinct_texts(0.2, |_| true), None);
    }

    #[test]
    fn the_same_number_in_other_notations_is_not_noticed() {
        let mut slot = None;
        for (row, text) in ["2", "2.0", "2e0", "+2.000"].iter().enumerate() {
            Spellings::observe(&mut slot, text, 2.0, row);
        }
        assert_eq!(slot.unwrap().distinct_texts(2.0, |_| true), None);
    }
}
