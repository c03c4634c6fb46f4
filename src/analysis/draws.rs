//! Stable draws: each source's value in trial t is a pure function of
//! (seed, the source's id, t), a counter-based generator rather than one
//! stream shared by every source; the same at every condition, so a trial
//! is one instance of the chain read at every point, and a calibration
//! taken at the reference is worked out once a trial. A reading's noise
//! and quantization draw so too, from streams of their own, scaled at
//! each condition. Adding, removing or reordering sources, stages or
//! chains therefore leaves every other source's draws bit-identical, and
//! no result depends on how trials are split between threads.
//!
//! The key of a stream is FNV-1a (64-bit) of the source's id, mixed with
//! the seed; the t-th draw is the SplitMix64
//! output at counter t of that stream (Steele, Lea and Flood, "Fast
//! splittable pseudorandom number generators", OOPSLA 2014). Normals come
//! from Wichura's AS 241 inverse of the normal CDF (PPND16, accurate to
//! about 1e-16), so one draw is one uniform; its tails take the
//! logarithm of `physics::log`, the C library's algorithm to the bit in
//! plain arithmetic, so a batch's tails vectorise and no draw depends on
//! which build of the library a machine runs.

use crate::eval::LANES;
use crate::physics::log;

/// The SplitMix64 increment (2⁶⁴ over the golden ratio, odd).
const GOLDEN: u64 = 0x9E37_79B9_7F4A_7C15;

/// The SplitMix64 finaliser of `z + GOLDEN`: a bijection of 64-bit words
/// whose outputs at consecutive counters pass BigCrush.
pub fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(GOLDEN);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// FNV-1a, 64-bit (Fowler, Noll and Vo): a name's stable key.
pub fn fnv1a(bytes: &[u8]) -> u64 {
    bytes.iter().fold(0xCBF2_9CE4_8422_2325, |h, &b| {
        (h ^ u64::from(b)).wrapping_mul(0x0000_0100_0000_01B3)
    })
}

/// One source's stream.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Stream(u64);

impl Stream {
    /// The stream called `id` under `seed`, keyed by `key` too: tests'
    /// streams, each apart.
    #[cfg(test)]
    pub fn new(seed: u64, id: &str, key: u64) -> Stream {
        Stream(mix(mix(seed ^ fnv1a(id.as_bytes())) ^ mix(key)))
    }

    /// The stream of the source called `id` under the user's `seed`, the
    /// same at every condition.
    pub fn source(seed: u64, id: &str) -> Stream {
        Stream(mix(mix(seed ^ fnv1a(id.as_bytes()))))
    }

    /// The 64 random bits of trial `t`.
    #[inline]
    pub fn bits(self, t: u64) -> u64 {
        mix(self.0.wrapping_add(t.wrapping_mul(GOLDEN)))
    }

    /// Trial `t`'s uniform on [0, 1), in steps of 2⁻⁵³.
    #[inline]
    pub fn uniform(self, t: u64) -> f64 {
        uniform_of(self.bits(t))
    }

    /// Which of `cells` equal-probability cells trial `t`'s draw falls
    /// in: the same for its uniform and its normal, both monotone in the
    /// same bits.
    #[inline]
    pub fn cell(self, t: u64, cells: usize) -> usize {
        cell_of(self.bits(t), cells)
    }

    /// Trial `t`'s standard normal: the inverse CDF of a uniform on the
    /// open interval (0, 1), midway in its 2⁻⁵³ step, so never infinite.
    #[inline]
    pub fn normal(self, t: u64) -> f64 {
        normal_of(self.bits(t))
    }

    /// The random bits of trials `t0 ..`, a batch's worth.
    #[inline(always)]
    pub fn bits_each(self, t0: u64, out: &mut [u64; LANES]) {
        self.bits_from(t0, out);
    }

    /// The random bits of trials `t0 ..`, as many as `out` holds.
    #[inline(always)]
    pub fn bits_from(self, t0: u64, out: &mut [u64]) {
        for (k, bits) in out.iter_mut().enumerate() {
            *bits = self.bits(t0 + k as u64);
        }
    }
}

/// [`normal_of`] of each of a batch's bits, to the bit: the central
/// region's rational function over every lane at once, which vectorises,
/// then the lanes in the tails (15 %), marked a bit a lane, gathered
/// together and taken [`TAIL_GROUP`] at a time, which vectorises too.
#[inline(always)]
pub fn normals_of(bits: &[u64; LANES], out: &mut [f64; LANES]) {
    let mut p = [0.0; LANES];
    let tails = central_of(bits, &mut p, out);
    let (mut lanes, mut count) = ([0; LANES], 0);
    mark_lanes(tails, 0, &mut lanes, &mut count);
    tails_of(&p, &lanes[..count], out);
}

/// Draws a span: what [`normals_each`] takes at once.
pub const SPAN: usize = 256;

/// [`normal_of`] of each of `bits` (at most [`SPAN`]) into `out`, as
/// long, to the bit: the central region a batch at a time, then the tail
/// lanes of the whole span together, so their groups of [`TAIL_GROUP`]
/// are full but for the last (a batch's five or so fill one group by
/// half).
#[inline(always)]
pub fn normals_each(bits: &[u64], out: &mut [f64]) {
    assert!(bits.len() <= SPAN && out.len() == bits.len());
    let mut p = [0.0; SPAN];
    let mut lanes = [0; SPAN];
    let mut count = 0;
    let batches = bits.chunks(LANES).zip(out.chunks_mut(LANES));
    for (b, (bits, out)) in batches.enumerate() {
        // A short batch is filled with draws at the centre, dropped after.
        let (mut batch, mut z) = ([1 << 63; LANES], [0.0; LANES]);
        batch[..bits.len()].copy_from_slice(bits);
        let p = (&mut p[b * LANES..(b + 1) * LANES]).try_into();
        let tails = central_of(&batch, p.expect("a whole batch"), &mut z);
        out.copy_from_slice(&z[..out.len()]);
        mark_lanes(tails, (b * LANES) as u16, &mut lanes, &mut count);
    }
    tails_of(&p, &lanes[..count], out);
}

/// The lanes whose bits are set in `tails`, each `first` on, appended to
/// `lanes` from `count`.
#[inline(always)]
fn mark_lanes(mut tails: u64, first: u16, lanes: &mut [u16], count: &mut usize) {
    while tails != 0 {
        lanes[*count] = first + tails.trailing_zeros() as u16;
        tails &= tails - 1;
        *count += 1;
    }
}

// A span's lanes fit a u16, a batch's tail lanes the bits of a u64, and
// a span is whole batches.
const _: () = assert!(SPAN <= 1 << 16 && LANES <= 64 && SPAN.is_multiple_of(LANES));

/// Each lane's open uniform into `p` and its quantile into `out` where
/// it lies in AS 241's central region; the lanes beyond it (the tails),
/// a bit a lane.
#[inline(always)]
fn central_of(bits: &[u64; LANES], p: &mut [f64; LANES], out: &mut [f64; LANES]) -> u64 {
    let mut tails = 0u64;
    for (k, ((z, p), &bits)) in out.iter_mut().zip(p).zip(bits).enumerate() {
        *p = open_uniform_of(bits);
        let q = *p - 0.5;
        tails |= u64::from(q.abs() > CENTRAL) << k;
        *z = central_quantile(q);
    }
    tails
}

/// Tail lanes a group: a span's 38 or so in five groups, a batch's five
/// or so in one.
const TAIL_GROUP: usize = 8;

/// [`inverse_normal_cdf`] of the lanes `lanes` of `p` (all in the tails)
/// into the same lanes of `out`: their quantiles worked out a group at a
/// time (a group not full is filled with a tail value whose answers are
/// dropped).
#[inline(always)]
fn tails_of(p: &[f64], lanes: &[u16], out: &mut [f64]) {
    for group in lanes.chunks(TAIL_GROUP) {
        let mut at = [0.01; TAIL_GROUP];
        for (at, &k) in at.iter_mut().zip(group) {
            *at = p[usize::from(k)];
        }
        let mut z = [0.0; TAIL_GROUP];
        tail_quantiles(&at, &mut z);
        for (&z, &k) in z.iter().zip(group) {
            out[usize::from(k)] = z;
        }
    }
}

/// [`inverse_normal_cdf`] of each of `p`, all in the tails, lane by lane
/// alike: the logarithm's table path and the intermediate region's
/// rational function over every lane, then the rare lanes beyond either
/// (below about 10⁻¹¹ from an end) alone.
#[inline(always)]
fn tail_quantiles(p: &[f64; TAIL_GROUP], out: &mut [f64; TAIL_GROUP]) {
    let mut rare = false;
    for (z, &p) in out.iter_mut().zip(p) {
        let end = p.min(1.0 - p);
        let r = (-log::table_path(end)).sqrt();
        rare |= !log::on_table(end) | (r > 5.0);
        let x = rational(r - 1.6, &as241::INTERMEDIATE_NUM, &as241::INTERMEDIATE_DEN);
        *z = if p - 0.5 < 0.0 { -x } else { x };
    }
    if rare {
        for (z, &p) in out.iter_mut().zip(p) {
            *z = inverse_normal_cdf(p);
        }
    }
}

/// [`uniform_of`] of each of a batch's bits.
#[inline(always)]
pub fn uniforms_of(bits: &[u64; LANES], out: &mut [f64; LANES]) {
    for (u, &bits) in out.iter_mut().zip(bits) {
        *u = uniform_of(bits);
    }
}

/// The uniform on [0, 1) of a draw's bits (see [`Stream::uniform`]).
#[inline]
pub fn uniform_of(bits: u64) -> f64 {
    top_bits(bits) * (1.0 / (1u64 << 53) as f64)
}

/// The top 53 of a draw's 64 bits as a number, exactly: as `(bits >> 11)
/// as f64`, but through two 26- and 27-bit halves each set into the
/// mantissa of 2⁵² and taken off it again, which vector units do a lane
/// at a time where they have no conversion from 64-bit integers.
#[inline(always)]
fn top_bits(bits: u64) -> f64 {
    const TWO_52: f64 = 4_503_599_627_370_496.0;
    let top = bits >> 11;
    let (high, low) = (top >> 26, top & ((1 << 26) - 1));
    let as_number = |k: u64| f64::from_bits(TWO_52.to_bits() | k) - TWO_52;
    // Both parts and the sum are whole numbers below 2⁵³: exact.
    as_number(high) * (1u64 << 26) as f64 + as_number(low)
}

/// The standard normal of a draw's bits (see [`Stream::normal`]).
#[inline]
pub fn normal_of(bits: u64) -> f64 {
    inverse_normal_cdf(open_uniform_of(bits))
}

/// The uniform on the open interval (0, 1) of a draw's bits, midway in
/// its 2⁻⁵³ step, that [`normal_of`] inverts.
#[inline(always)]
fn open_uniform_of(bits: u64) -> f64 {
    (top_bits(bits) + 0.5) * (1.0 / (1u64 << 53) as f64)
}

/// The cell of a draw's bits among `cells` (see [`Stream::cell`]).
#[inline(always)]
pub fn cell_of(bits: u64, cells: usize) -> usize {
    let top = bits >> 11;
    // Below 2¹¹ cells the product of a 53-bit draw fits 64 bits: one
    // multiply, not a 128-bit one, and the same cell.
    match u64::try_from(cells) {
        Ok(few) if few <= 1 << 11 => ((top * few) >> 53) as usize,
        _ => ((u128::from(top) * cells as u128) >> 53) as usize,
    }
}

/// [`cell_of`] of each of `bits` among `cells` into `out`, a byte a cell
/// (so at most 256 cells): the bound tested once, not in the loop, which
/// then vectorises.
#[inline(always)]
pub fn cells_of(bits: &[u64], cells: usize, out: &mut [u8]) {
    assert!(cells <= 256);
    let few = cells as u64;
    for (cell, &bits) in out.iter_mut().zip(bits) {
        // cell_of's one-multiply form, to the same cell.
        *cell = (((bits >> 11) * few) >> 53) as u8;
    }
}

/// The standard normal quantile of `p` in (0, 1): Wichura, "Algorithm
/// AS 241: The percentage points of the normal distribution", Applied
/// Statistics 37 (1988) 477–484, PPND16 (relative error about 1e-16).
pub fn inverse_normal_cdf(p: f64) -> f64 {
    let q = p - 0.5;
    if q.abs() <= CENTRAL {
        return central_quantile(q);
    }
    let r = (-log::ln(p.min(1.0 - p))).sqrt();
    let x = if r <= 5.0 {
        rational(r - 1.6, &as241::INTERMEDIATE_NUM, &as241::INTERMEDIATE_DEN)
    } else {
        rational(r - 5.0, &as241::TAIL_NUM, &as241::TAIL_DEN)
    };
    if q < 0.0 {
        -x
    } else {
        x
    }
}

/// AS 241's central region: |p − ½| up to this.
const CENTRAL: f64 = 0.425;

/// The quantile at p = ½ + `q` in AS 241's central region.
#[inline(always)]
fn central_quantile(q: f64) -> f64 {
    let r = 0.180625 - q * q;
    q * rational(r, &as241::CENTRAL_NUM, &as241::CENTRAL_DEN)
}

/// num(r) / den(r), both coefficients lowest order first, den's constant 1.
#[inline(always)]
fn rational(r: f64, num: &[f64; 8], den: &[f64; 7]) -> f64 {
    let n = num.iter().rev().fold(0.0, |acc, &c| acc * r + c);
    let d = den.iter().rev().fold(0.0, |acc, &c| acc * r + c) * r + 1.0;
    n / d
}

/// AS 241's coefficients with every digit the paper prints, so they can
/// be checked against it line by line (more digits than an f64 holds).
#[allow(clippy::excessive_precision)]
mod as241 {
    pub const CENTRAL_NUM: [f64; 8] = [
        3.387_132_872_796_366_608,
        1.331_416_678_917_843_774_5e2,
        1.971_590_950_306_551_442_7e3,
        1.373_169_376_550_946_112_5e4,
        4.592_195_393_154_987_145_7e4,
        6.726_577_092_700_870_085_3e4,
        3.343_057_558_358_812_810_5e4,
        2.509_080_928_730_122_672_7e3,
    ];
    pub const CENTRAL_DEN: [f64; 7] = [
        4.231_333_070_160_091_125_2e1,
        6.871_870_074_920_579_083e2,
        5.394_196_021_424_751_107_7e3,
        2.121_379_430_158_659_586_7e4,
        3.930_789_580_009_271_061e4,
        2.872_908_573_572_194_267_4e4,
        5.226_495_278_852_854_561e3,
    ];
    pub const INTERMEDIATE_NUM: [f64; 8] = [
        1.423_437_110_749_683_577_34,
        4.630_337_846_156_545_295_9,
        5.769_497_221_460_691_405_5,
        3.647_848_324_763_204_605_04,
        1.270_458_252_452_368_382_58,
        2.417_807_251_774_506_117_7e-1,
        2.272_384_498_926_918_458_33e-2,
        7.745_450_142_783_414_076_4e-4,
    ];
    pub const INTERMEDIATE_DEN: [f64; 7] = [
        2.053_191_626_637_758_821_87,
        1.676_384_830_183_803_849_4,
        6.897_673_349_851_000_045_5e-1,
        1.481_039_764_274_800_745_9e-1,
        1.519_866_656_361_645_719_66e-2,
        5.475_938_084_995_344_946e-4,
        1.050_750_071_644_416_843_24e-9,
    ];
    pub const TAIL_NUM: [f64; 8] = [
        6.657_904_643_501_103_777_2,
        5.463_784_911_164_114_369_9,
        1.784_826_539_917_291_335_8,
        2.965_605_718_285_048_912_3e-1,
        2.653_218_952_657_612_309_3e-2,
        1.242_660_947_388_078_438_6e-3,
        2.711_555_568_743_487_578_15e-5,
        2.010_334_399_292_288_132_65e-7,
    ];
    pub const TAIL_DEN: [f64; 7] = [
        5.998_322_065_558_879_376_9e-1,
        1.369_298_809_227_358_053_1e-1,
        1.487_536_129_085_061_485_25e-2,
        7.868_691_311_456_132_591e-4,
        1.846_318_317_510_054_681_8e-5,
        1.421_511_758_316_445_888_7e-7,
        2.044_263_103_389_939_785_64e-15,
    ];
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Standard normal quantiles, recalled from memory to 16 digits
    /// (they agree with any statistics table to the digits tables give;
    /// the committed fixture `normal_quantiles.csv` checks many more).
    #[test]
    fn inverse_cdf_gives_the_textbook_quantiles() {
        for (p, x) in [
            (0.5, 0.0),
            (0.975, 1.959_963_984_540_054),
            (0.8, 0.841_621_233_572_914_3),
            (0.999, 3.090_232_306_167_813_5),
            (1e-10, -6.361_340_902_404_056),
        ] {
            let got = inverse_normal_cdf(p);
            assert!(
                (got - x).abs() <= 1e-14 * x.abs().max(1.0),
                "{p}: {got} vs {x}"
            );
        }
    }

    #[test]
    fn a_stream_depends_on_its_id_seed_and_condition_only() {
        let a = Stream::new(1, "drive.current", 7);
        assert_eq!(a, Stream::new(1, "drive.current", 7));
        assert_ne!(a, Stream::new(2, "drive.current", 7));
        assert_ne!(a, Stream::new(1, "drive.current", 8));
        assert_ne!(a, Stream::new(1, "drive.compliance", 7));
        assert_ne!(a.bits(0), a.bits(1));
    }

    /// The first draws of one stream, pinned: any change to the generator
    /// changes every budget's numbers, so it must be deliberate. Worked
    /// independently from the definitions above (FNV-1a, SplitMix64) in
    /// a few lines of Python's arbitrary-precision integers.
    #[test]
    fn the_generator_is_pinned() {
        let s = Stream::new(1, "drive.current", 7);
        assert_eq!(
            [s.bits(0), s.bits(1), s.bits(2)],
            [
                0x17f8_39ed_9ad3_dbe2,
                0xbd1d_7194_ba09_6f7f,
                0xa80a_3a10_d960_d964
            ]
        );
        let s = Stream::source(1, "drive.current");
        assert_eq!(
            [s.bits(0), s.bits(1), s.bits(2)],
            [
                0x0e6e_8a85_7c9e_77b1,
                0xe741_02f2_5a3d_a1ee,
                0xacb5_a637_0693_2545
            ]
        );
    }

    /// The halves' conversion is the plain one to the bit: at both ends,
    /// at each half's edge and over a stream of draws.
    #[test]
    fn the_top_bits_convert_exactly() {
        let s = Stream::new(3, "top", 0);
        let edges = [
            0,
            1 << 11,
            (1 << 37) - 1,
            1 << 37,
            (1 << 37) + (1 << 11),
            u64::MAX,
        ];
        for bits in edges.into_iter().chain((0..100_000).map(|t| s.bits(t))) {
            assert_eq!(
                top_bits(bits).to_bits(),
                ((bits >> 11) as f64).to_bits(),
                "{bits:#x}"
            );
        }
    }

    /// A batch's normals are each trial's own to the bit, as built for
    /// the baseline and for the wide vector units, central and tails
    /// alike (10⁴ batches hold about 4.8·10⁴ draws beyond |p − ½| = 0.425).
    #[test]
    fn a_batch_of_normals_is_each_trials_normal() {
        use crate::eval::wide;
        let s = Stream::new(3, "front.noise", 11);
        let mut tails = 0;
        for batch in 0..10_000u64 {
            let t0 = batch * LANES as u64;
            let (mut wide_z, mut portable_z) = ([0.0; LANES], [0.0; LANES]);
            let mut bits = [0; LANES];
            s.bits_each(t0, &mut bits);
            wide::run(
                #[inline(always)]
                || normals_of(&bits, &mut wide_z),
            );
            wide::portable(|| normals_of(&bits, &mut portable_z));
            for (k, (w, p)) in wide_z.iter().zip(&portable_z).enumerate() {
                let one = s.normal(t0 + k as u64);
                assert_eq!(w.to_bits(), one.to_bits(), "trial {}", t0 + k as u64);
                assert_eq!(p.to_bits(), one.to_bits(), "trial {}", t0 + k as u64);
                tails += usize::from(one.abs() > 1.439);
            }
        }
        // |z| > 1.439 is |p − ½| > 0.425: Φ(1.4395) = 0.925, from a
        // standard normal table (recalled from memory); 15 % of 3.2·10⁵.
        assert!(tails > 40_000, "{tails} draws in the tails");
    }

    /// A span of normals is each trial's own, on both builds, at every
    /// length from none to a whole span (short batches filled and their
    /// fill dropped), and where every lane lies in a tail (more groups
    /// than a batch ever fills, the last one not full).
    #[test]
    fn a_span_of_normals_is_each_trials_normal() {
        let s = Stream::new(5, "conv.noise", 2);
        let mut bits = [0; SPAN];
        s.bits_from(1_000, &mut bits);
        let tail_bits: Vec<u64> = (0..1_000_000)
            .map(|t| s.bits(t))
            .filter(|&b| (open_uniform_of(b) - 0.5).abs() > CENTRAL)
            .take(SPAN - 3)
            .collect();
        let spans = (0..=SPAN).map(|n| bits[..n].to_vec()).chain([tail_bits]);
        for bits in spans {
            each_lanes_normal_on_both_builds(&bits, normals_each);
        }
    }

    /// Asserts that `normals` of `bits` gives each lane's [`normal_of`],
    /// in the kernels' build and in the portable one; the kernels' draws.
    /// `normals` must be inlined (an `#[inline(always)]` function or
    /// closure), or it is built for the baseline, not the kernel.
    fn each_lanes_normal_on_both_builds(
        bits: &[u64],
        normals: impl Fn(&[u64], &mut [f64]) + Copy,
    ) -> Vec<f64> {
        use crate::eval::wide;
        let n = bits.len();
        let (mut wide_z, mut portable_z) = (vec![f64::NAN; n], vec![f64::NAN; n]);
        wide::run(
            #[inline(always)]
            || normals(bits, &mut wide_z),
        );
        wide::portable(|| normals(bits, &mut portable_z));
        for (k, &b) in bits.iter().enumerate() {
            let one = normal_of(b).to_bits();
            assert_eq!(wide_z[k].to_bits(), one, "lane {k} of {n}");
            assert_eq!(portable_z[k].to_bits(), one, "lane {k} of {n}");
        }
        wide_z
    }

    /// Each lane's cell is [`cell_of`]'s, at every count of cells a byte
    /// holds, the draws' extremes included.
    #[test]
    fn a_run_of_cells_is_each_draws_cell() {
        let s = Stream::source(9, "r1.r");
        let mut bits: Vec<u64> = (0..4_000).map(|t| s.bits(t)).collect();
        bits.extend([0, u64::MAX, 1 << 63, (1 << 63) - 1]);
        let mut cells = vec![0; bits.len()];
        for count in 1..=256 {
            cells_of(&bits, count, &mut cells);
            for (&c, &b) in cells.iter().zip(&bits) {
                assert_eq!(usize::from(c), cell_of(b, count), "{b:#x} of {count}");
            }
        }
    }

    /// Lanes at the draws' extremes (p = 2⁻⁵⁴ and 1 − 2⁻⁵⁴, and about
    /// 10⁻¹², beyond AS 241's intermediate region), and more tail lanes
    /// than one group holds: each lane's own normal, on both builds.
    #[test]
    fn a_batch_of_extreme_and_many_tail_lanes_is_each_lanes_normal() {
        let at = |p: f64| ((p * (1u64 << 53) as f64) as u64) << 11;
        let mut bits = [0; LANES];
        for (k, b) in bits.iter_mut().enumerate() {
            *b = match k % 6 {
                0 => 0,
                1 => u64::MAX,
                2 => at(1e-12),
                3 => at(1.0 - 1e-12),
                4 => at(0.01 + k as f64 * 1e-3),
                _ => at(0.5 + k as f64 * 1e-3),
            };
        }
        let wide_z = each_lanes_normal_on_both_builds(
            &bits,
            #[inline(always)]
            |bits, z| {
                let (bits, z): (&[u64; LANES], &mut [f64; LANES]) = (
                    bits.try_into().expect("a batch"),
                    z.try_into().expect("a batch"),
                );
                normals_of(bits, z);
            },
        );
        // Φ⁻¹(2⁻⁵⁴) = −8.292361075813595 and Φ⁻¹(10⁻¹²) = −7.034483825301132
        // (Python's `statistics.NormalDist().inv_cdf`, also AS 241); the
        // second lane's p is 10⁻¹² to the draws' step of 2⁻⁵³.
        assert!((wide_z[0] + 8.292_361_075_813_595).abs() < 1e-12);
        assert!(
            (wide_z[2] + 7.034_483_825_301_132).abs() < 1e-4,
            "{}",
            wide_z[2]
        );
    }

    /// Uniform moments over 10⁵ draws: mean ½ and variance 1/12 to
    /// within a few standard errors; normals: mean 0, variance 1 and a
    /// 2.5 % tail holding 2.5 %.
    #[test]
    fn draws_have_the_moments_of_their_distributions() {
        let s = Stream::new(1, "probe.r0", 300);
        let n = 100_000;
        let u: Vec<f64> = (0..n).map(|t| s.uniform(t)).collect();
        let mean = u.iter().sum::<f64>() / n as f64;
        let var = u.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64;
        assert!((mean - 0.5).abs() < 4.0 * (1.0 / 12.0 / n as f64).sqrt());
        assert!((var - 1.0 / 12.0).abs() < 0.002);
        let z: Vec<f64> = (0..n).map(|t| s.normal(t)).collect();
        let mean = z.iter().sum::<f64>() / n as f64;
        let var = z.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64;
        let tail = z.iter().filter(|&&x| x > 1.959_964).count() as f64 / n as f64;
        assert!(mean.abs() < 4.0 / (n as f64).sqrt(), "{mean}");
        assert!((var - 1.0).abs() < 0.02, "{var}");
        assert!((tail - 0.025).abs() < 4.0 * (0.025 * 0.975 / n as f64).sqrt());
    }
}
