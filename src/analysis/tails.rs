//! The few order statistics a coverage interval needs, found in its two
//! tails alone: a strided sample places a threshold a little inside each
//! tail, one pass gathers the trials beyond them, and selection runs on
//! those few percent rather than twice on the whole run. Order
//! statistics are values, not positions, so the result is the full
//! selection's to the bit; when a threshold lands short of the ranks
//! asked (few trials, many ties) the full selection runs instead.
use crate::eval::wide;

/// Fewer trials than this go straight to the full selection: the sample
/// would be too thin to place a threshold and the saving is nil.
const SMALLEST: usize = 4096;
/// One trial in `STRIDE` goes into the sample.
const STRIDE: usize = 32;

/// The ranks (0-based, in ascending order under `f64::total_cmp`) of the
/// order statistics wanted from each tail: `low.0 ..= low.1` from the
/// bottom, `high.0 ..= high.1` from the top.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Ranks {
    pub low: (usize, usize),
    pub high: (usize, usize),
}

/// The values at `ranks.low.0`, `ranks.low.1`, `ranks.high.0` and
/// `ranks.high.1` of `all` sorted by `f64::total_cmp`; `all` is left as
/// it was. `all` must be longer than `ranks.high.1`, and the low ranks
/// must not exceed the high ones.
pub fn order_statistics(all: &[f64], ranks: Ranks) -> [f64; 4] {
    wide::run(
        #[inline(always)]
        || order_statistics_kernel(all, ranks),
    )
}

#[inline(always)]
fn order_statistics_kernel(all: &[f64], ranks: Ranks) -> [f64; 4] {
    tails(all, ranks).unwrap_or_else(|| by_full_selection(all, ranks))
}

/// A key whose signed order is `f64::total_cmp`'s (the same transform).
#[inline]
fn key(x: f64) -> i64 {
    let bits = x.to_bits() as i64;
    bits ^ ((((bits >> 63) as u64) >> 1) as i64)
}

/// [`order_statistics`] through the tails; None when the thresholds do
/// not bracket the ranks. Inlined into the kernel, so the pass over every
/// trial is built for its vector unit.
#[inline(always)]
fn tails(all: &[f64], ranks: Ranks) -> Option<[f64; 4]> {
    let n = all.len();
    if n < SMALLEST {
        return None;
    }
    let (low_keep, high_keep) = (ranks.low.1 + 1, n - ranks.high.0);
    if 4 * (low_keep + high_keep) > n {
        return None;
    }
    let mut sample: Vec<f64> = all.iter().step_by(STRIDE).copied().collect();
    let s = sample.len();
    // The sample rank that holds the tail's share of trials, moved
    // inwards by four of its binomial standard deviations and a few
    // ranks, so the gathered tail almost always holds the ranks asked.
    let inward = |keep: usize| {
        let expected = keep as f64 * s as f64 / n as f64;
        ((expected + 4.0 * expected.sqrt() + 4.0).ceil() as usize).min(s - 1)
    };
    let (low_at, high_from_top) = (inward(low_keep), inward(high_keep));
    if low_at + high_from_top >= s - 1 {
        return None;
    }
    let high_at = s - 1 - high_from_top;
    let (_, &mut high_cut, _) = sample.select_nth_unstable_by(high_at, f64::total_cmp);
    let (_, &mut low_cut, _) = sample[..high_at].select_nth_unstable_by(low_at, f64::total_cmp);
    // `low` is every trial at or below the low cut and `high` every one
    // at or above the high cut (above it when the cuts coincide): a
    // bottom and a top segment of the sorted run.
    let (low_key, high_key) = (key(low_cut), key(high_cut));
    let mut low = Vec::with_capacity(2 * low_keep + 64);
    let mut high = Vec::with_capacity(2 * high_keep + 64);
    let mut words = all.chunks_exact(64);
    for word in &mut words {
        let (below, above) = beyond_cuts(word, low_key, high_key);
        gather(word, below, &mut low);
        gather(word, above & !below, &mut high);
    }
    let rest = words.remainder();
    let (below, above) = beyond_cuts(rest, low_key, high_key);
    gather(rest, below, &mut low);
    gather(rest, above & !below, &mut high);
    if low.len() < low_keep || high.len() < high_keep {
        return None;
    }
    let [a, b] = two_ranks(&mut low, ranks.low);
    let offset = n - high.len();
    let [c, d] = two_ranks(&mut high, (ranks.high.0 - offset, ranks.high.1 - offset));
    Some([a, b, c, d])
}

/// Which of `word` (at most 64 trials) lie at or below the key `low` and
/// which at or above `high`, a bit a trial: compared without a branch,
/// which vectorises, where a branch a trial mispredicts on most of the
/// 15 % or so gathered.
#[inline(always)]
fn beyond_cuts(word: &[f64], low: i64, high: i64) -> (u64, u64) {
    let (mut below, mut above) = (0u64, 0u64);
    for (i, &x) in word.iter().enumerate() {
        let k = key(x);
        below |= u64::from(k <= low) << i;
        above |= u64::from(k >= high) << i;
    }
    (below, above)
}

/// The trials of `word` whose bits are set in `marked`, in trial order,
/// onto `into`.
#[inline(always)]
fn gather(word: &[f64], mut marked: u64, into: &mut Vec<f64>) {
    while marked != 0 {
        into.push(word[marked.trailing_zeros() as usize]);
        marked &= marked - 1;
    }
}

/// The values at ranks `first <= last` of `v`, which it reorders.
fn two_ranks(v: &mut [f64], (first, last): (usize, usize)) -> [f64; 2] {
    let (below, &mut at_last, _) = v.select_nth_unstable_by(last, f64::total_cmp);
    let at_first = if first < last {
        *below.select_nth_unstable_by(first, f64::total_cmp).1
    } else {
        at_last
    };
    [at_first, at_last]
}

/// [`order_statistics`] by selection over a copy of every trial.
fn by_full_selection(all: &[f64], ranks: Ranks) -> [f64; 4] {
    let mut v = all.to_vec();
    let [c, d] = two_ranks_at_least(&mut v, ranks.high);
    let [a, b] = if ranks.low.1 < ranks.high.0 {
        two_ranks(&mut v[..ranks.high.0], ranks.low)
    } else {
        [c, c]
    };
    [a, b, c, d]
}

/// The values at ranks `first <= last` of `v`, with every value below
/// rank `first` left in `v[..first]` for a later selection there.
fn two_ranks_at_least(v: &mut [f64], (first, last): (usize, usize)) -> [f64; 2] {
    let (_, &mut at_first, above) = v.select_nth_unstable_by(first, f64::total_cmp);
    let at_last = if last > first {
        *above
            .select_nth_unstable_by(last - first - 1, f64::total_cmp)
            .1
    } else {
        at_first
    };
    [at_first, at_last]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::draws::Stream;

    fn sorted_at(all: &[f64], ranks: Ranks) -> [f64; 4] {
        let mut v = all.to_vec();
        v.sort_by(f64::total_cmp);
        [
            v[ranks.low.0],
            v[ranks.low.1],
            v[ranks.high.0],
            v[ranks.high.1],
        ]
    }

    fn ranks_of(n: usize) -> Ranks {
        let (lo, hi) = (n / 40, n - 1 - n / 40);
        let reach = (n as f64).sqrt() as usize / 4 + 1;
        Ranks {
            low: (lo.saturating_sub(reach), lo),
            high: (hi, (hi + reach).min(n - 1)),
        }
    }

    /// Against a full sort: normals, a heavy tail, coarse values with
    /// many ties, a constant run, and every size from tiny to past the
    /// sample's threshold (and past whole words of 64 trials), bit for
    /// bit, on both builds.
    #[test]
    fn tails_give_the_sorted_order_statistics() {
        let s = Stream::new(5, "tails", 0);
        let shapes: [&dyn Fn(u64) -> f64; 5] = [
            &|t| s.normal(t),
            &|t| s.normal(t).powi(3) * 1e-3,
            &|t| (s.normal(t) * 3.0).round() * 0.25,
            &|_| 0.5,
            &|t| if t % 2 == 0 { -0.0 } else { 0.0 },
        ];
        for n in [1, 2, 3, 40, 100, 4095, 4096, 5000, 20_000, 65_537] {
            for shape in shapes {
                let all: Vec<f64> = (0..n as u64).map(shape).collect();
                let ranks = ranks_of(n);
                let want = sorted_at(&all, ranks).map(f64::to_bits);
                let got = order_statistics(&all, ranks);
                assert_eq!(got.map(f64::to_bits), want, "n {n}");
                let portable = wide::portable(|| order_statistics(&all, ranks));
                assert_eq!(portable.map(f64::to_bits), want, "n {n}, portable");
            }
        }
    }

    /// Sorted input, ascending and descending: the strided sample still
    /// places both thresholds.
    #[test]
    fn ordered_input_uses_the_tails() {
        let n = 100_000;
        let up: Vec<f64> = (0..n).map(|i| i as f64).collect();
        let down: Vec<f64> = up.iter().rev().copied().collect();
        let ranks = ranks_of(n);
        for all in [up, down] {
            assert!(tails(&all, ranks).is_some());
            assert_eq!(order_statistics(&all, ranks), sorted_at(&all, ranks));
        }
    }
}
