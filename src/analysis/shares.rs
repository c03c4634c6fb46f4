//! Each source's share of the output variance from the Monte Carlo trials
//! already run: the first-order sensitivity index S_i = Var(E[Y | X_i]) /
//! Var(Y), estimated from given data by the correlation ratio over an
//! equiprobable partition of the input (Plischke, Borgonovo and Smith,
//! "Global sensitivity measures from given data", European Journal of
//! Operational Research 226 (2013) 536–550). No second run is needed:
//! the Monte Carlo records each source's partition cell as it draws (a
//! byte a trial), or, for a stream not recorded, the cell is recomputed
//! from the stream and t.
//!
//! Where the chain is linear in its sources, S_i is the GUM share
//! u_i² / u_c²; where the two disagree, the linear model does not hold.

use super::draws::Stream;
use crate::eval::wide;

/// Most cells a partition uses (a cell's index fits a byte). A cell keeps the variance of E[Y | X_i]
/// between cells and loses what lies inside one: for a linear effect of
/// a uniform source 1/B² of it, of a normal one (wide tail cells) 0.23 %
/// at B = 100 and 0.07 % at 256 (worked numerically from the normal's
/// partial moments); the estimator's scatter grows as √(B)/N.
const MAX_CELLS: usize = 256;

/// Cells of the partition for `trials` trials: √N, so each cell holds
/// as many trials as there are cells, 2 to 256.
pub fn cells(trials: usize) -> usize {
    ((trials as f64).sqrt().floor() as usize).clamp(2, MAX_CELLS)
}

/// The share below which a source cannot be told from one with no effect
/// at `trials` trials: twice the standard deviation of the estimate for a
/// source with none. With no effect, the between-cell sum of squares over
/// the output variance is χ² with B − 1 degrees of freedom (one-way
/// ANOVA), variance 2(B − 1), and the estimate is that less its mean,
/// over N: standard deviation √(2(B − 1)) / N, 0.14 % at 10⁴ trials.
/// About 2 % of such sources' estimates land above twice that.
pub fn floor(trials: usize) -> f64 {
    let b = cells(trials);
    if trials <= b {
        return 1.0;
    }
    2.0 * (2.0 * (b - 1) as f64).sqrt() / trials as f64
}

/// The floor as printed: rounded up to a tenth of a percent, so a share
/// shown under it is under the floor itself.
pub fn floor_shown(floor: f64) -> f64 {
    (floor * 1000.0).ceil() / 1000.0
}

/// The outputs of a run about their mean, and their sum of squares:
/// worked out once for every source's index.
pub struct Centered {
    deviations: Vec<f64>,
    total: f64,
}

impl Centered {
    pub fn new(y: &[f64]) -> Centered {
        let mean = y.iter().sum::<f64>() / y.len().max(1) as f64;
        let deviations: Vec<f64> = y.iter().map(|v| v - mean).collect();
        let total = deviations.iter().map(|d| d * d).sum();
        Centered { deviations, total }
    }
}

/// The first-order index of the source drawn from `stream` for the
/// outputs `y` (trial t at index t), over `cells` equiprobable cells of
/// its uniform. The between-cell sum of squares is corrected for the part
/// that scatter alone gives it, (B − 1) times the within-cell mean square
/// (the ANOVA estimate), so a source with no effect comes out near zero
/// rather than near (B − 1)/N; the result is clamped to [0, 1].
pub fn first_order(y: &Centered, stream: Stream, cells: usize) -> f64 {
    first_order_by(y, cells, |t| stream.cell(t as u64, cells))
}

/// Runs read side by side: how many conditions' outputs one pass over a
/// source's recorded cells sums at once.
pub const GROUP: usize = 8;

/// Up to [`GROUP`] runs' outputs with their means and sums of squares
/// about them: the same numbers [`Centered`] holds for each run alone.
/// The deviations are laid side by side a block of trials at a time, so
/// no copy of the whole runs is made.
pub struct CenteredGroup<'a> {
    runs: Vec<&'a [f64]>,
    means: [f64; GROUP],
    totals: [f64; GROUP],
    n: usize,
}

impl<'a> CenteredGroup<'a> {
    /// `runs` (1 to [`GROUP`], all of one length).
    pub fn new(runs: &[&'a [f64]]) -> CenteredGroup<'a> {
        let runs: Vec<&[f64]> = runs.iter().take(GROUP).copied().collect();
        let n = runs.first().map_or(0, |y| y.len());
        let mut group = CenteredGroup {
            runs,
            means: [0.0; GROUP],
            totals: [0.0; GROUP],
            n,
        };
        if n == 0 {
            return group;
        }
        // Less zero, a value is itself. A missing run's mean and sum of
        // squares stay zero.
        let runs = group.runs.len();
        let sums = group.summed([0.0; GROUP], |v| v);
        group.means = std::array::from_fn(|g| if g < runs { sums[g] / n as f64 } else { 0.0 });
        let totals = group.summed(group.means, |d| d * d);
        group.totals = std::array::from_fn(|g| if g < runs { totals[g] } else { 0.0 });
        group
    }

    /// Each run's sum of `f` of its values less `about`, trial after trial
    /// as a run alone sums them (from −0.0, as `f64`'s `Sum` does); the
    /// runs' additions are independent, so a trial's go side by side.
    fn summed(&self, about: [f64; GROUP], f: impl Fn(f64) -> f64) -> [f64; GROUP] {
        // A missing run reads the first again; its sum is not used.
        let ys: [&[f64]; GROUP] =
            std::array::from_fn(|g| &self.runs.get(g).unwrap_or(&self.runs[0])[..self.n]);
        let mut sums = [-0.0; GROUP];
        #[allow(clippy::needless_range_loop)] // t indexes every run at once
        for t in 0..self.n {
            sums = std::array::from_fn(|g| sums[g] + f(ys[g][t] - about[g]));
        }
        sums
    }

    /// Trial `t`'s deviation in run `g`.
    #[inline]
    fn deviation(&self, g: usize, t: usize) -> f64 {
        self.runs[g][t] - self.means[g]
    }

    /// The deviations of trials `start ..` side by side into `rows` (a
    /// missing run's are zero); how many trials that was.
    fn rows(&self, start: usize, rows: &mut [[f64; GROUP]]) -> usize {
        let len = rows.len().min(self.n - start);
        for (g, y) in self.runs.iter().enumerate() {
            for (row, v) in rows.iter_mut().zip(&y[start..start + len]) {
                row[g] = v - self.means[g];
            }
        }
        len
    }

    /// Run `g` alone.
    fn run(&self, g: usize) -> Centered {
        Centered {
            deviations: (0..self.n).map(|t| self.deviation(g, t)).collect(),
            total: self.totals[g],
        }
    }
}

/// A source's recorded cells (trial t's at `cells[t]`) and how many
/// trials each cell holds: the same for every run, so counted once for
/// all of them rather than in each group's pass.
pub struct CellColumn<'a> {
    cells: &'a [u8],
    count: [u32; MAX_CELLS],
}

impl<'a> CellColumn<'a> {
    /// The column of the first `n` trials of `cells` (which records at
    /// least that many).
    pub fn new(cells: &'a [u8], n: usize) -> CellColumn<'a> {
        let cells = &cells[..n];
        let mut count = [0; MAX_CELLS];
        for &cell in cells {
            count[usize::from(cell)] += 1;
        }
        CellColumn { cells, count }
    }

    /// The cells of trials `start .. start + len`.
    fn span(&self, start: usize, len: usize) -> &'a [u8] {
        &self.cells[start..start + len]
    }
}

/// [`first_order`] of every run of `y` for each source whose cells the
/// Monte Carlo recorded while drawing (`columns[k]`): the same sums in
/// the same order, each cell's sum of every run's deviations gathered in
/// one pass over the trials.
pub fn first_order_columns(
    y: &CenteredGroup,
    columns: &[CellColumn],
    cells: usize,
    space: &mut ColumnSpace,
) -> Vec<[f64; GROUP]> {
    wide::run(
        #[inline(always)]
        || first_order_columns_kernel(y, columns, cells, space),
    )
}

/// The working space of [`first_order_columns`]: each column's sums by
/// cell and a block of rows, kept from one group of runs to the next.
/// The sums' table has room for [`MAX_CELLS`] cells a column, so a cell's
/// byte indexes it with no bounds check; only the cells in use are
/// written, so only their pages are ever mapped (written whole, the
/// table's 16 KiB a column were a fault a small page: 290 of the feed
/// silo's 1 600).
#[derive(Default)]
pub struct ColumnSpace {
    /// Each column's table, `MAX_CELLS` rows of `GROUP`, one after another.
    sum: Vec<f64>,
    block: Vec<[f64; GROUP]>,
}

#[inline(always)]
fn first_order_columns_kernel(
    y: &CenteredGroup,
    columns: &[CellColumn],
    cells: usize,
    space: &mut ColumnSpace,
) -> Vec<[f64; GROUP]> {
    if cells > MAX_CELLS {
        return columns
            .iter()
            .map(|column| {
                std::array::from_fn(|g| {
                    first_order_by(&y.run(g), cells, |t| usize::from(column.cells[t]))
                })
            })
            .collect();
    }
    // Trials a block: each column's sums stay in cache while the block's
    // rows are read once a column.
    const BLOCK: usize = 1024;
    let ColumnSpace { sum, block } = space;
    let table = MAX_CELLS * GROUP;
    if sum.len() < columns.len() * table {
        // Zeroed by mapping (a vector of zeros of a plain number is), not
        // written: only the cells in use are ever touched.
        *sum = vec![0.0; columns.len() * table];
    }
    let (sum, _) = sum[..columns.len() * table].as_chunks_mut::<GROUP>();
    let (sum, _) = sum.as_chunks_mut::<MAX_CELLS>();
    for sum in sum.iter_mut() {
        sum[..cells].fill([0.0; GROUP]);
    }
    block.resize(BLOCK, [0.0; GROUP]);
    for start in (0..y.n).step_by(BLOCK) {
        let len = y.rows(start, block);
        let rows = &block[..len];
        // Two columns a pass: their sums are independent, so each row's
        // additions into the two overlap.
        let mut pairs = columns.chunks_exact(2).zip(sum.chunks_exact_mut(2));
        for (pair, sums) in &mut pairs {
            let [first, second] = sums else { continue };
            let (a, b) = (pair[0].span(start, len), pair[1].span(start, len));
            for ((&a, &b), row) in a.iter().zip(b).zip(rows) {
                add_row(&mut first[usize::from(a)], row);
                add_row(&mut second[usize::from(b)], row);
            }
        }
        let paired = columns.len() / 2 * 2;
        for (column, sum) in columns[paired..].iter().zip(&mut sum[paired..]) {
            for (&cell, row) in column.span(start, len).iter().zip(rows) {
                add_row(&mut sum[usize::from(cell)], row);
            }
        }
    }
    columns
        .iter()
        .map(|column| &column.count)
        .zip(sum.iter())
        .map(|(count, sum)| {
            std::array::from_fn(|g| {
                let usable = g < y.runs.len() && usable_of(y.n, y.totals[g], cells);
                if !usable {
                    return 0.0;
                }
                // Cells past those in use are never written, nor read:
                // their pages stay unmapped.
                let run: [f64; MAX_CELLS] =
                    std::array::from_fn(|c| if c < cells { sum[c][g] } else { 0.0 });
                index_from(y.n, y.totals[g], &count[..cells], &run[..cells])
            })
        })
        .collect()
}

/// A row of deviations added into a cell's sums, written whole so the
/// additions go four to an instruction. (A cell is a byte, and the
/// tables hold MAX_CELLS cells: no bounds check.)
#[inline(always)]
fn add_row(sum: &mut [f64; GROUP], row: &[f64; GROUP]) {
    *sum = std::array::from_fn(|g| sum[g] + row[g]);
}

fn first_order_by(y: &Centered, cells: usize, cell: impl Fn(usize) -> usize) -> f64 {
    if !usable(y, cells) {
        return 0.0;
    }
    let mut count = vec![0u32; cells];
    let mut sum = vec![0.0; cells];
    for (t, &d) in y.deviations.iter().enumerate() {
        let cell = cell(t);
        count[cell] += 1;
        sum[cell] += d;
    }
    index_of(y, &count, &sum)
}

/// Whether `cells` cells can partition the outputs: more trials than
/// cells, at least 2, and a variance to share.
fn usable(y: &Centered, cells: usize) -> bool {
    usable_of(y.deviations.len(), y.total, cells)
}

fn usable_of(n: usize, total: f64, cells: usize) -> bool {
    n > cells && cells >= 2 && total > 0.0 && total.is_finite()
}

/// The index from each cell's count and sum of deviations.
fn index_of(y: &Centered, count: &[u32], sum: &[f64]) -> f64 {
    index_from(y.deviations.len(), y.total, count, sum)
}

/// [`index_of`] of `n` outputs whose sum of squares is `total`.
fn index_from(n: usize, total: f64, count: &[u32], sum: &[f64]) -> f64 {
    let cells = count.len();
    let between: f64 = count
        .iter()
        .zip(sum)
        .filter(|(&c, _)| c > 0)
        .map(|(&c, &s)| s * s / f64::from(c))
        .sum();
    let within = (total - between).max(0.0) / (n - cells) as f64;
    ((between - (cells - 1) as f64 * within) / total).clamp(0.0, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// The Ishigami function, Y = sin X1 + 7 sin² X2 + 0.1 X3⁴ sin X1 with
    /// X_i uniform on (−π, π), has first-order indices S1 = 0.3139,
    /// S2 = 0.4424 and S3 = 0 (closed forms, Ishigami and Homma 1990;
    /// values as tabulated in Saltelli et al., "Global Sensitivity
    /// Analysis: The Primer", 2008, recalled from memory): X3 acts only
    /// through its interaction with X1, which a first-order index must
    /// not count.
    #[test]
    fn ishigami_indices() {
        let n = 200_000;
        let s: Vec<Stream> = ["x1", "x2", "x3"]
            .iter()
            .map(|id| Stream::new(3, id, 0))
            .collect();
        let x = |i: usize, t: u64| -PI + 2.0 * PI * s[i].uniform(t);
        let y: Vec<f64> = (0..n as u64)
            .map(|t| {
                let (a, b, c) = (x(0, t), x(1, t), x(2, t));
                a.sin() + 7.0 * b.sin().powi(2) + 0.1 * c.powi(4) * a.sin()
            })
            .collect();
        let (b, y) = (cells(n), Centered::new(&y));
        let got: Vec<f64> = s.iter().map(|&st| first_order(&y, st, b)).collect();
        assert!((got[0] - 0.3139).abs() < 0.01, "{got:?}");
        assert!((got[1] - 0.4424).abs() < 0.01, "{got:?}");
        assert!(got[2] < 0.01, "{got:?}");
    }

    /// Runs side by side give each run's own indices to the bit: three
    /// runs (a group not full) of different mixes of three sources, over
    /// more trials than one block.
    #[test]
    fn grouped_runs_match_each_run_alone() {
        let s: Vec<Stream> = ["a", "b", "c"]
            .iter()
            .map(|id| Stream::new(2, id, 0))
            .collect();
        let n = 10_001;
        let cells = cells(n);
        let runs: Vec<Vec<f64>> = (0..3)
            .map(|r| {
                let w = [1.0 + r as f64, 0.5, (r * r) as f64];
                (0..n as u64)
                    .map(|t| {
                        (0..3)
                            .map(|i| w[i] * s[i].uniform(t).powi(i as i32 + 1))
                            .sum()
                    })
                    .collect()
            })
            .collect();
        let columns: Vec<Vec<u8>> = s
            .iter()
            .map(|st| (0..n as u64).map(|t| st.cell(t, cells) as u8).collect())
            .collect();
        let slices: Vec<&[f64]> = runs.iter().map(Vec::as_slice).collect();
        let group = CenteredGroup::new(&slices);
        let counted: Vec<CellColumn> = columns.iter().map(|c| CellColumn::new(c, n)).collect();
        let grouped = first_order_columns(&group, &counted, cells, &mut ColumnSpace::default());
        for (g, run) in runs.iter().enumerate() {
            let alone = Centered::new(run);
            assert_eq!(group.totals[g].to_bits(), alone.total.to_bits());
            for (k, &st) in s.iter().enumerate() {
                let want = first_order(&alone, st, cells).to_bits();
                assert_eq!(grouped[k][g].to_bits(), want, "run {g} source {k}");
            }
        }
        assert!(grouped.iter().all(|k| k[3..].iter().all(|&x| x == 0.0)));
        assert!(group.means[3..]
            .iter()
            .chain(&group.totals[3..])
            .all(|&x| x == 0.0));
    }

    /// A linear sum of two equal uniforms: each holds half the variance.
    #[test]
    fn equal_linear_sources_share_evenly() {
        let (a, b) = (Stream::new(1, "a", 0), Stream::new(1, "b", 0));
        let y: Vec<f64> = (0..20_000).map(|t| a.uniform(t) + b.uniform(t)).collect();
        let (n, y) = (cells(y.len()), Centered::new(&y));
        for s in [a, b] {
            let share = first_order(&y, s, n);
            assert!((share - 0.5).abs() < 0.02, "{share}");
        }
        let unrelated = first_order(&y, Stream::new(1, "c", 0), n);
        assert!(unrelated < 0.005, "{unrelated}");
    }

    /// Sources with no effect at 10⁴ trials: about 2.3 % of their
    /// estimates above the floor (a normal's tail beyond 2 σ), about 16 %
    /// above half of it (beyond 1 σ; both tails from any standard normal
    /// table, recalled from memory), so the floor is twice the scatter,
    /// not some other multiple of it. The floor itself is the doc's
    /// formula worked by hand: B = 100, 2 √198 / 10⁴ = 0.00281.
    #[test]
    fn the_floor_is_twice_the_scatter_of_a_source_with_no_effect() {
        let (n, sources) = (10_000, 400);
        let out = Stream::new(5, "y", 0);
        let y: Vec<f64> = (0..n as u64).map(|t| out.normal(t)).collect();
        let (b, y) = (cells(n), Centered::new(&y));
        let floor = floor(n);
        assert!((floor - 0.0028).abs() < 0.0001, "{floor}");
        let estimates: Vec<f64> = (0..sources)
            .map(|k| first_order(&y, Stream::new(5, &format!("x{k}"), 0), b))
            .collect();
        let above = |x: f64| estimates.iter().filter(|&&s| s > x).count() as f64 / sources as f64;
        assert!(above(floor) < 0.05, "{}", above(floor));
        assert!(
            (0.08..0.26).contains(&above(floor / 2.0)),
            "{}",
            above(floor / 2.0)
        );
    }
}
