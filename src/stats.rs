//! Order statistics shared by the stages (no stage of its own): the percentile of a sample by
//! the definition numpy uses by default (Hyndman & Fan 1996, Am Stat 50:361, definition 7).

/// The `percentile` (0-100) of `values`, by linear interpolation between order statistics
/// (Hyndman & Fan 1996 definition 7, numpy's default): with the n finite values sorted as
/// x_0 <= ... <= x_(n-1) and r = percentile/100·(n − 1), it is x_⌊r⌋ + (r − ⌊r⌋)·(x_⌊r⌋+1 − x_⌊r⌋).
///
/// Non-finite values are skipped. `None` when no finite value is left or `percentile` is not
/// within 0-100.
pub fn percentile(values: impl Iterator<Item = f64>, percentile: f64) -> Option<f64> {
    if !(0.0..=100.0).contains(&percentile) {
        return None;
    }
    let x: Vec<f64> = values.filter(|h| h.is_finite()).collect();
    if x.is_empty() {
        return None;
    }
    let r = percentile / 100.0 * (x.len() - 1) as f64;
    let lo = (r.floor() as usize).min(x.len() - 1);
    let frac = r - r.floor();
    // The order statistics `lo` and `lo + 1` (a selection, not a full sort), among the values
    // up to a bound taken from a sample when those are enough to hold both (the same values,
    // found in a fraction of the heights), else among all.
    let mut x = lowest_at_least(x, lo + 2);
    let (_, &mut below, rest) = x.select_nth_unstable_by(lo, f64::total_cmp);
    let above = rest.iter().copied().min_by(f64::total_cmp);
    Some(match above {
        Some(above) if frac > 0.0 => below + frac * (above - below),
        _ => below,
    })
}

/// The values of `x` up to a bound, when at least `k` of them are (then they hold the `k`
/// smallest values of `x`, ties included, and the same order statistics below `k`); `x` itself
/// otherwise. The bound is an order statistic of every 64th value, a little above the share
/// `k / n` (the sample's quantile varies by about its own square root).
fn lowest_at_least(x: Vec<f64>, k: usize) -> Vec<f64> {
    const STRIDE: usize = 64;
    let n = x.len();
    if n < 64 * STRIDE || 4 * k > n {
        return x;
    }
    let mut sample: Vec<f64> = x.iter().copied().step_by(STRIDE).collect();
    let expected = k * sample.len() / n;
    let rank = (expected + 4 * (expected as f64).sqrt() as usize + 8).min(sample.len() - 1);
    let (_, &mut bound, _) = sample.select_nth_unstable_by(rank, f64::total_cmp);
    let low: Vec<f64> = x
        .iter()
        .copied()
        .filter(|v| v.total_cmp(&bound).is_le())
        .collect();
    if low.len() >= k {
        low
    } else {
        x
    }
}
