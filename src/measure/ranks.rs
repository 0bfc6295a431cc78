//! Ranks with ties, as the coefficients of Chatterjee (2021) and Azadkia and Chatterjee (2021)
//! define them.

/// Row indices sorted by value (IEEE total order), ties kept in row order.
fn order(values: &[f64]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..values.len()).collect();
    idx.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
    idx
}

/// Runs of equal values in sorted order, as (start, end) half-open ranges into `order`.
fn tie_runs<'a>(
    values: &'a [f64],
    order: &'a [usize],
) -> impl Iterator<Item = (usize, usize)> + 'a {
    let mut start = 0;
    std::iter::from_fn(move || {
        if start >= order.len() {
            return None;
        }
        let mut end = start + 1;
        while end < order.len() && values[order[end]] == values[order[start]] {
            end += 1;
        }
        let run = (start, end);
        start = end;
        Some(run)
    })
}

/// R_i = #{j : Y_j ≤ Y_i} (the "max" rank: ties share the largest position).
pub fn at_most_counts(values: &[f64]) -> Vec<u32> {
    let order = order(values);
    let mut ranks = vec![0u32; values.len()];
    for (start, end) in tie_runs(values, &order) {
        for &i in &order[start..end] {
            ranks[i] = end as u32;
        }
    }
    ranks
}

/// L_i = #{j : Y_j ≥ Y_i}.
pub fn at_least_counts(values: &[f64]) -> Vec<u32> {
    let order = order(values);
    let n = values.len() as u32;
    let mut counts = vec![0u32; values.len()];
    for (start, _end) in tie_runs(values, &order) {
        let run_end = _end;
        for &i in &order[start..run_end] {
            counts[i] = n - start as u32;
        }
    }
    counts
}

/// Twice the average rank (1-based) of each value: an integer, so that distances between rank-scaled
/// points are exact in floating point (2·n ≤ 2^26 keeps every squared distance below 2^53 up to
/// twelve dimensions and beyond). Twice the mid-rank is an increasing affine map of the empirical CDF
/// value with ties averaged, so nearest neighbours are the same as under that CDF scaling.
pub fn doubled_mid_ranks(values: &[f64]) -> Vec<f64> {
    doubled_mid_ranks_as(values, |doubled| doubled as f64)
}

/// [`doubled_mid_ranks`] as 32-bit whole numbers (half the memory, the same values), for fewer
/// than 2^31 values.
pub fn doubled_mid_ranks_whole(values: &[f64]) -> Vec<u32> {
    assert!(values.len() < 1 << 31, "twice the rank fits in 32 bits");
    doubled_mid_ranks_as(values, |doubled| doubled as u32)
}

fn doubled_mid_ranks_as<T: Copy + Default>(values: &[f64], convert: impl Fn(usize) -> T) -> Vec<T> {
    let order = order(values);
    let mut ranks = vec![T::default(); values.len()];
    for (start, end) in tie_runs(values, &order) {
        // average of 1-based positions start+1 ..= end, doubled: (start + 1 + end)
        let doubled = convert(start + 1 + end);
        for &i in &order[start..end] {
            ranks[i] = doubled;
        }
    }
    ranks
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_follow_the_definitions_on_a_tied_example() {
        // Definitions of R_i and L_i in Azadkia and Chatterjee (2021), Section 2, checked by hand.
        let y = [3.0, 1.0, 3.0, 2.0, 5.0];
        assert_eq!(at_most_counts(&y), vec![4, 1, 4, 2, 5]);
        assert_eq!(at_least_counts(&y), vec![3, 5, 3, 4, 1]);
        assert_eq!(doubled_mid_ranks(&y), vec![7.0, 2.0, 7.0, 4.0, 10.0]);
    }

    #[test]
    fn counts_match_brute_force_on_random_ties() {
        let key = crate::rng::Key::new("ranks-test", 1).finish();
        let mut rng = key.stream(0);
        let y: Vec<f64> = (0..300)
            .map(|_| crate::rng::uniform_below(&mut rng, 17) as f64)
            .collect();
        let r = at_most_counts(&y);
        let l = at_least_counts(&y);
        let mid = doubled_mid_ranks(&y);
        for i in 0..y.len() {
            let below = y.iter().filter(|&&v| v < y[i]).count();
            let equal = y.iter().filter(|&&v| v == y[i]).count();
            assert_eq!(r[i] as usize, below + equal);
            assert_eq!(l[i] as usize, y.len() - below);
            assert_eq!(mid[i], (2 * below + equal + 1) as f64);
        }
    }
}
