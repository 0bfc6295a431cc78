//! The committed fixtures that the reference cases need at run time, compiled into the binary.
//! `build.rs` compresses each file (DEFLATE, RFC 1951) into `OUT_DIR`; they are inflated here when
//! a case needs them. The files in the repository stay the one source of every value.

/// One embedded fixture: its path in the repository and its compressed bytes.
pub struct Embedded {
    /// Path of the committed file.
    pub path: &'static str,
    compressed: &'static [u8],
}

macro_rules! embedded {
    ($path:literal, $name:literal) => {
        Embedded {
            path: $path,
            compressed: include_bytes!(concat!(env!("OUT_DIR"), "/", $name, ".deflate")),
        }
    };
}

/// tests/reference/xi_scipy.json: ξ_n and p-values by SciPy (tests/reference/make_fixtures.py).
pub const XI_SCIPY: Embedded = embedded!("tests/reference/xi_scipy.json", "xi_scipy.json");
/// tests/reference/chi2_scipy.json: chi-square quantiles by SciPy.
pub const CHI2_SCIPY: Embedded = embedded!("tests/reference/chi2_scipy.json", "chi2_scipy.json");
/// tests/data/alarm_discrete_hr_lv.csv: 5000 samples of ALARM, 13 columns.
pub const ALARM_DISCRETE: Embedded = embedded!(
    "tests/data/alarm_discrete_hr_lv.csv",
    "alarm_discrete_hr_lv.csv"
);
/// tests/data/asia_discrete_n5000_seed1.csv: 5000 samples of ASIA.
pub const ASIA_DISCRETE: Embedded = embedded!(
    "tests/data/asia_discrete_n5000_seed1.csv",
    "asia_discrete_n5000_seed1.csv"
);

impl Embedded {
    /// The file's text. Inflating bytes this build compressed cannot fail unless the binary is
    /// damaged; that is reported as a text the case then fails on, never a panic.
    pub fn text(&self) -> Result<String, String> {
        let bytes = miniz_oxide::inflate::decompress_to_vec(self.compressed)
            .map_err(|e| format!("the embedded copy of {} is damaged ({e:?})", self.path))?;
        String::from_utf8(bytes)
            .map_err(|_| format!("the embedded copy of {} is not UTF-8", self.path))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_embedded_fixture_equals_the_committed_file() {
        for fixture in [XI_SCIPY, CHI2_SCIPY, ALARM_DISCRETE, ASIA_DISCRETE] {
            let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(fixture.path);
            let committed = std::fs::read_to_string(&path).unwrap();
            assert_eq!(fixture.text().unwrap(), committed, "{}", fixture.path);
        }
    }
}
