//! How often does the search claim a column that shares an unmeasured cause with the target?
//!
//! H → X, H → Y, P → Y, with H not measured and X not a cause of Y; plus Y → C and an unrelated
//! column U. Under the assumption of no unmeasured common causes the pattern X → Y ← P is what the
//! data show, so a claim of X is expected; the dossier's caution names it. Invented mechanisms,
//! seeds 0..20, n = 2000.
//!
//! ```text
//! cargo run --release --example hidden_cause
//! ```

use forebear::data::Table;
use forebear::measure::Scaling;
use forebear::rng::{standard_normal, unit_interval, Key};
use forebear::search::{local_parents, Outcome, SearchData, SelectionRule};

fn main() {
    for rule in [SelectionRule::calibrated(), SelectionRule::natural()] {
        let (mut claims_x, mut identified) = (0, 0);
        for seed in 0..20u64 {
            let key = Key::new("hidden-cause", seed).finish();
            let mut columns = vec![Vec::new(); 5];
            for i in 0..2000u64 {
                let rng = &mut key.stream(i);
                let h = standard_normal(rng);
                let x = (1.5 * h).tanh() + 0.5 * standard_normal(rng);
                let p = unit_interval(rng) * 4.0 - 2.0;
                let y = h.sin() + 0.8 * p.tanh() + 0.3 * standard_normal(rng);
                let c = y * y / 2.0 + 0.4 * standard_normal(rng);
                let u = standard_normal(rng);
                for (col, v) in columns.iter_mut().zip([x, p, y, c, u]) {
                    col.push(v);
                }
            }
            let names = ["x", "p", "y", "c", "u"].map(String::from).to_vec();
            let table = Table::from_columns(names, columns);
            let data = SearchData::new(&table, Scaling::Rank, 1, 0);
            let found = local_parents(&data, 2, &[0, 1, 3, 4], 0.05, &rule);
            if found.outcome == Outcome::Identified {
                identified += 1;
                if found.parent_sets[0].iter().any(|c| c == "x") {
                    claims_x += 1;
                }
            }
        }
        println!(
            "{} rule: identified in {identified} of 20 seeds, x claimed in {claims_x}",
            rule.stopping_rule.name()
        );
    }
}
