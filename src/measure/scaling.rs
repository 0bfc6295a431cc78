//! Predictor scaling. It changes which row is a nearest neighbour, so it is a recorded setting.

use super::neighbors::Column;
use super::ranks::{doubled_mid_ranks, doubled_mid_ranks_whole};
use serde::{Deserialize, Serialize};

/// How predictor columns are put on a common footing before nearest-neighbour search.
#[derive(
    Clone,
    Copy,
    Debug,
    PartialEq,
    Eq,
    Serialize,
    schemars::JsonSchema,
    Deserialize,
    Default,
    clap::ValueEnum,
)]
#[serde(rename_all = "lowercase")]
pub enum Scaling {
    /// Empirical CDF value with ties averaged (stored as twice the mid-rank; same neighbours).
    #[default]
    Rank,
    /// Centred and divided by the sample standard deviation.
    Standardize,
    /// Raw values.
    None,
}

impl Scaling {
    /// Parses a command-line name.
    pub fn parse(name: &str) -> Option<Scaling> {
        match name {
            "rank" => Some(Scaling::Rank),
            "standardize" => Some(Scaling::Standardize),
            "none" => Some(Scaling::None),
            _ => None,
        }
    }

    /// The command-line name.
    pub fn name(self) -> &'static str {
        match self {
            Scaling::Rank => "rank",
            Scaling::Standardize => "standardize",
            Scaling::None => "none",
        }
    }

    /// Applies the scaling to one column.
    pub fn apply(self, values: &[f64]) -> Vec<f64> {
        match self {
            Scaling::Rank => doubled_mid_ranks(values),
            Scaling::Standardize => standardize(values),
            Scaling::None => values.to_vec(),
        }
    }

    /// Applies the scaling to one column and keeps the result compactly: read through
    /// [`Scaled::column`], the values of [`Scaling::apply`].
    pub fn scale(self, values: &[f64]) -> Scaled {
        match self {
            Scaling::Rank if values.len() < 1 << 31 => {
                Scaled::Whole(doubled_mid_ranks_whole(values))
            }
            _ => Scaled::Values(self.apply(values)),
        }
    }
}

/// A scaled column as a search keeps it for the whole run: rank scaling's doubled mid-ranks as
/// 32-bit whole numbers (half the memory of `f64`, read back as the same values), the other
/// scalings as values.
pub enum Scaled {
    /// Scaled values.
    Values(Vec<f64>),
    /// Doubled mid-ranks.
    Whole(Vec<u32>),
}

impl Scaled {
    /// The column as the neighbour search reads it.
    pub fn column(&self) -> Column<'_> {
        match self {
            Scaled::Values(values) => Column::Values(values),
            Scaled::Whole(whole) => Column::Whole(whole),
        }
    }
}

fn standardize(values: &[f64]) -> Vec<f64> {
    let n = values.len() as f64;
    let mean = values.iter().sum::<f64>() / n;
    let var = values.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (n - 1.0).max(1.0);
    let sd = var.sqrt();
    if sd > 0.0 {
        values.iter().map(|v| (v - mean) / sd).collect()
    } else {
        vec![0.0; values.len()]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_kept_column_reads_back_as_the_applied_scaling() {
        // Rank scaling is kept as u32 doubled mid-ranks; read back, the values of `apply` (Azadkia
        // and Chatterjee 2021 define T_n on ranks only, so the scaling is common practice).
        let x = [3.5, -1.0, 3.5, 2.0, 7.25, -1.0, 0.0, -0.0];
        for scaling in [Scaling::Rank, Scaling::Standardize, Scaling::None] {
            let kept = scaling.scale(&x);
            let column = kept.column();
            let read: Vec<f64> = (0..x.len()).map(|i| column.at(i)).collect();
            let applied = scaling.apply(&x);
            assert_eq!(
                read.iter().map(|v| v.to_bits()).collect::<Vec<_>>(),
                applied.iter().map(|v| v.to_bits()).collect::<Vec<_>>(),
                "{scaling:?}"
            );
        }
        assert!(matches!(Scaling::Rank.scale(&x), Scaled::Whole(_)));
    }

    #[test]
    fn standardize_gives_zero_mean_unit_sample_variance() {
        // Definition of the sample standard deviation (common practice).
        let z = Scaling::Standardize.apply(&[1.0, 2.0, 3.0, 4.0]);
        let mean: f64 = z.iter().sum::<f64>() / 4.0;
        let var: f64 = z.iter().map(|v| v * v).sum::<f64>() / 3.0;
        assert!(mean.abs() < 1e-12 && (var - 1.0).abs() < 1e-12);
    }

    #[test]
    fn rank_scaling_is_invariant_under_monotone_transforms() {
        let x = [0.5, -2.0, 3.0, 3.0, 10.0];
        let t: Vec<f64> = x.iter().map(|v: &f64| v.powi(3) + v.exp()).collect();
        assert_eq!(Scaling::Rank.apply(&x), Scaling::Rank.apply(&t));
    }
}
