//! The natural logarithm, as the normal quantile's tails take it: one
//! lane or a batch of lanes, to the same bits.
//!
//! Source: the table-driven algorithm of ARM's Optimized Routines
//! (`math/log.c` with `math/log_data.c`, MIT or Apache-2.0 licensed),
//! which the GNU C library ships since 2.28 (`sysdeps/ieee754/dbl-64/
//! e_log.c`): x = 2^k z, ln x = k ln 2 + ln c + log1p(z/c − 1) for the
//! point c of z's 128th of [0.6875, 1.375), a degree-5 polynomial for
//! log1p(r) − r; error below 0.52 ulp. Its multiplies and adds are fused
//! exactly where that library's build for CPUs with FMA (`__log_fma`,
//! x86-64) fuses them, as its machine code shows: on such a CPU it gives
//! that library's bits, which a test checks; on any CPU it gives the same
//! bits, where the library would take its unfused build. Being plain
//! arithmetic, a batch of lanes vectorises, which a call into the library
//! per lane does not. The table is the library's, each entry checked by
//! `tests/reference/log.py` in 60-digit decimal arithmetic (1/c and ln c
//! rounded to the nearest double) into `tests/reference/fixtures/
//! log_table.csv`.

/// ln 2 as a head and a tail, so that k · head is exact.
const LN2_HI: f64 = f64::from_bits(0x3fe6_2e42_fefa_3800);
const LN2_LO: f64 = f64::from_bits(0x3d2e_f357_93c7_6730);
/// log1p(r) − r ≈ A0 r² + A1 r³ + A2 r⁴ + A3 r⁵ + A4 r⁶ on |r| < 1/256.
const A: [f64; 5] = [
    f64::from_bits(0xbfe0_0000_0000_0001),
    f64::from_bits(0x3fd5_5555_5551_305b),
    f64::from_bits(0xbfcf_ffff_ffeb_4590),
    f64::from_bits(0x3fc9_99b3_24f1_0111),
    f64::from_bits(0xbfc5_5575_e506_c89f),
];
/// The bits of 0.6875: z = x / 2^k lies in [0.6875, 1.375).
const OFF: u64 = 0x3fe6_0000_0000_0000;
/// Arguments within [1 − 2⁻⁴, 1 + 0x1.09p−4] take the library's separate
/// path near one; the table path is for the others.
const NEAR_ONE_LOW: u64 = 0x3fee_0000_0000_0000;
const NEAR_ONE_SPAN: u64 = 0x3ff1_0900_0000_0000 - NEAR_ONE_LOW;
/// 1.5 · 2⁵²: a small integer added to it sits in the low bits, exactly.
const SHIFT: f64 = 6_755_399_441_055_744.0;

/// The natural logarithm of `x`.
#[inline]
pub fn ln(x: f64) -> f64 {
    if !on_table(x) {
        return x.ln();
    }
    // Built for a CPU without FMA, as code outside the wide kernels is, a
    // fused multiply-add is a call into software: on a CPU with FMA, the
    // CPU's own instruction is taken instead.
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("fma") {
        // SAFETY: the CPU has FMA, checked just above.
        return unsafe { table_path_fused(x) };
    }
    table_path(x)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "fma")]
unsafe fn table_path_fused(x: f64) -> f64 {
    table_path(x)
}

/// Whether `x` takes the table path: a positive normal number, not near
/// one.
#[inline(always)]
pub fn on_table(x: f64) -> bool {
    let ix = x.to_bits();
    let top = ix >> 48;
    let near_one = ix.wrapping_sub(NEAR_ONE_LOW) < NEAR_ONE_SPAN;
    let normal = top.wrapping_sub(0x0010) < 0x7ff0 - 0x0010;
    !near_one & normal
}

/// ln(x) for `x` where [`on_table`]; any bits elsewhere. Inlined into
/// the batch kernels, where it is built for their vector unit.
#[inline(always)]
pub fn table_path(x: f64) -> f64 {
    let ix = x.to_bits();
    let tmp = ix.wrapping_sub(OFF);
    let i = ((tmp >> 45) % 128) as usize;
    let k = (tmp as i64) >> 52;
    let z = f64::from_bits(ix.wrapping_sub(tmp & (0xfff << 52)));
    let (invc, logc) = (
        f64::from_bits(TABLE[2 * i]),
        f64::from_bits(TABLE[2 * i + 1]),
    );
    // r ≈ z/c − 1, |r| < 1/256.
    let r = z.mul_add(invc, -1.0);
    // k is within ±1100: set into the mantissa of 1.5 · 2⁵² and taken
    // off it again, exactly (vector units have no 64-bit conversion).
    let kd = f64::from_bits(SHIFT.to_bits().wrapping_add(k as u64)) - SHIFT;
    // hi + lo = r + ln c + k ln 2.
    let w = kd.mul_add(LN2_HI, logc);
    let hi = w + r;
    let lo = kd.mul_add(LN2_LO, w - hi + r);
    let r2 = r * r;
    let poly = r.mul_add(A[4], A[3]).mul_add(r2, r.mul_add(A[2], A[1]));
    (r * r2).mul_add(poly, r2.mul_add(A[0], lo)) + hi
}

/// For i = 0 .. 127: the bits of 1/c_i, then of ln c_i.
#[rustfmt::skip]
const TABLE: [u64; 256] = [
    0x3ff734f0c3e0de9f, 0xbfd7cc7f79e69000, 0x3ff713786a2ce91f, 0xbfd76feec20d0000,
    0x3ff6f26008fab5a0, 0xbfd713e31351e000, 0x3ff6d1a61f138c7d, 0xbfd6b85b38287800,
    0x3ff6b1490bc5b4d1, 0xbfd65d5590807800, 0x3ff69147332f0cba, 0xbfd602d076180000,
    0x3ff6719f18224223, 0xbfd5a8ca86909000, 0x3ff6524f99a51ed9, 0xbfd54f4356035000,
    0x3ff63356aa8f24c4, 0xbfd4f637c36b4000, 0x3ff614b36b9ddc14, 0xbfd49da7fda85000,
    0x3ff5f66452c65c4c, 0xbfd445923989a800, 0x3ff5d867b5912c4f, 0xbfd3edf439b0b800,
    0x3ff5babccb5b90de, 0xbfd396ce448f7000, 0x3ff59d61f2d91a78, 0xbfd3401e17bda000,
    0x3ff5805612465687, 0xbfd2e9e2ef468000, 0x3ff56397cee76bd3, 0xbfd2941b3830e000,
    0x3ff54725e2a77f93, 0xbfd23ec58cda8800, 0x3ff52aff42064583, 0xbfd1e9e129279000,
    0x3ff50f22dbb2bddf, 0xbfd1956d2b48f800, 0x3ff4f38f4734ded7, 0xbfd141679ab9f800,
    0x3ff4d843cfde2840, 0xbfd0edd094ef9800, 0x3ff4bd3ec078a3c8, 0xbfd09aa518db1000,
    0x3ff4a27fc3e0258a, 0xbfd047e65263b800, 0x3ff4880524d48434, 0xbfcfeb224586f000,
    0x3ff46dce1b192d0b, 0xbfcf474a7517b000, 0x3ff453d9d3391854, 0xbfcea4443d103000,
    0x3ff43a2744b4845a, 0xbfce020d44e9b000, 0x3ff420b54115f8fb, 0xbfcd60a22977f000,
    0x3ff40782da3ef4b1, 0xbfccc00104959000, 0x3ff3ee8f5d57fe8f, 0xbfcc202956891000,
    0x3ff3d5d9a00b4ce9, 0xbfcb81178d811000, 0x3ff3bd60c010c12b, 0xbfcae2c9ccd3d000,
    0x3ff3a5242b75dab8, 0xbfca45402e129000, 0x3ff38d22cd9fd002, 0xbfc9a877681df000,
    0x3ff3755bc5847a1c, 0xbfc90c6d69483000, 0x3ff35dce49ad36e2, 0xbfc87120a645c000,
    0x3ff34679984dd440, 0xbfc7d68fb4143000, 0x3ff32f5cceffcb24, 0xbfc73cb83c627000,
    0x3ff3187775a10d49, 0xbfc6a39a9b376000, 0x3ff301c8373e3990, 0xbfc60b3154b7a000,
    0x3ff2eb4ebb95f841, 0xbfc5737d76243000, 0x3ff2d50a0219a9d1, 0xbfc4dc7b8fc23000,
    0x3ff2bef9a8b7fd2a, 0xbfc4462c51d20000, 0x3ff2a91c7a0c1bab, 0xbfc3b08abc830000,
    0x3ff293726014b530, 0xbfc31b996b490000, 0x3ff27dfa5757a1f5, 0xbfc2875490a44000,
    0x3ff268b39b1d3bbf, 0xbfc1f3b9f879a000, 0x3ff2539d838ff5bd, 0xbfc160c8252ca000,
    0x3ff23eb7aac9083b, 0xbfc0ce7f57f72000, 0x3ff22a012ba940b6, 0xbfc03cdc49fea000,
    0x3ff2157996cc4132, 0xbfbf57bdbc4b8000, 0x3ff201201dd2fc9b, 0xbfbe370896404000,
    0x3ff1ecf4494d480b, 0xbfbd17983ef94000, 0x3ff1d8f5528f6569, 0xbfbbf9674ed8a000,
    0x3ff1c52311577e7c, 0xbfbadc79202f6000, 0x3ff1b17c74cb26e9, 0xbfb9c0c3e7288000,
    0x3ff19e010c2c1ab6, 0xbfb8a646b372c000, 0x3ff18ab07bb670bd, 0xbfb78d01b3ac0000,
    0x3ff1778a25efbcb6, 0xbfb674f145380000, 0x3ff1648d354c31da, 0xbfb55e0e6d878000,
    0x3ff151b990275fdd, 0xbfb4485cdea1e000, 0x3ff13f0ea432d24c, 0xbfb333d94d6aa000,
    0x3ff12c8b7210f9da, 0xbfb22079f8c56000, 0x3ff11a3028ecb531, 0xbfb10e4698622000,
    0x3ff107fbda8434af, 0xbfaffa6c6ad20000, 0x3ff0f5ee0f4e6bb3, 0xbfadda8d4a774000,
    0x3ff0e4065d2a9fce, 0xbfabbcece4850000, 0x3ff0d244632ca521, 0xbfa9a1894012c000,
    0x3ff0c0a77ce2981a, 0xbfa788583302c000, 0x3ff0af2f83c636d1, 0xbfa5715e67d68000,
    0x3ff09ddb98a01339, 0xbfa35c8a49658000, 0x3ff08cabaf52e7df, 0xbfa149e364154000,
    0x3ff07b9f2f4e28fb, 0xbf9e72c082eb8000, 0x3ff06ab58c358f19, 0xbf9a55f152528000,
    0x3ff059eea5ecf92c, 0xbf963d62cf818000, 0x3ff04949cdd12c90, 0xbf9228fb8caa0000,
    0x3ff038c6c6f0ada9, 0xbf8c317b20f90000, 0x3ff02865137932a9, 0xbf8419355daa0000,
    0x3ff0182427ea7348, 0xbf781203c2ec0000, 0x3ff008040614b195, 0xbf60040979240000,
    0x3fefe01ff726fa1a, 0x3f6feff384900000, 0x3fefa11cc261ea74, 0x3f87dc41353d0000,
    0x3fef6310b081992e, 0x3f93cea3c4c28000, 0x3fef25f63ceeadcd, 0x3f9b9fc114890000,
    0x3feee9c8039113e7, 0x3fa1b0d8ce110000, 0x3feeae8078cbb1ab, 0x3fa58a5bd001c000,
    0x3fee741aa29d0c9b, 0x3fa95c8340d88000, 0x3fee3a91830a99b5, 0x3fad276aef578000,
    0x3fee01e009609a56, 0x3fb07598e598c000, 0x3fedca01e577bb98, 0x3fb253f5e30d2000,
    0x3fed92f20b7c9103, 0x3fb42edd8b380000, 0x3fed5cac66fb5cce, 0x3fb606598757c000,
    0x3fed272caa5ede9d, 0x3fb7da76356a0000, 0x3fecf26e3e6b2ccd, 0x3fb9ab434e1c6000,
    0x3fecbe6da2a77902, 0x3fbb78c7bb0d6000, 0x3fec8b266d37086d, 0x3fbd431332e72000,
    0x3fec5894bd5d5804, 0x3fbf0a3171de6000, 0x3fec26b533bb9f8c, 0x3fc067152b914000,
    0x3febf583eeece73f, 0x3fc147858292b000, 0x3febc4fd75db96c1, 0x3fc2266ecdca3000,
    0x3feb951e0c864a28, 0x3fc303d7a6c55000, 0x3feb65e2c5ef3e2c, 0x3fc3dfc33c331000,
    0x3feb374867c9888b, 0x3fc4ba366b7a8000, 0x3feb094b211d304a, 0x3fc5933928d1f000,
    0x3feadbe885f2ef7e, 0x3fc66acd2418f000, 0x3feaaf1d31603da2, 0x3fc740f8ec669000,
    0x3fea82e63fd358a7, 0x3fc815c0f51af000, 0x3fea5740ef09738b, 0x3fc8e92954f68000,
    0x3fea2c2a90ab4b27, 0x3fc9bb3602f84000, 0x3fea01a01393f2d1, 0x3fca8bed1c2c0000,
    0x3fe9d79f24db3c1b, 0x3fcb5b515c01d000, 0x3fe9ae2505c7b190, 0x3fcc2967ccbcc000,
    0x3fe9852ef297ce2f, 0x3fccf635d5486000, 0x3fe95cbaeea44b75, 0x3fcdc1bd3446c000,
    0x3fe934c69de74838, 0x3fce8c01b8cfe000, 0x3fe90d4f2f6752e6, 0x3fcf5509c0179000,
    0x3fe8e6528effd79d, 0x3fd00e6c121fb800, 0x3fe8bfce9fcc007c, 0x3fd071b80e93d000,
    0x3fe899c0dabec30e, 0x3fd0d46b9e867000, 0x3fe87427aa2317fb, 0x3fd13687334bd000,
    0x3fe84f00acb39a08, 0x3fd1980d67234800, 0x3fe82a49e8653e55, 0x3fd1f8ffe0cc8000,
    0x3fe8060195f40260, 0x3fd2595fd7636800, 0x3fe7e22563e0a329, 0x3fd2b9300914a800,
    0x3fe7beb377dcb5ad, 0x3fd3187210436000, 0x3fe79baa679725c2, 0x3fd377266dec1800,
    0x3fe77907f2170657, 0x3fd3d54ffbaf3000, 0x3fe756cadbd6130c, 0x3fd432eee32fe000,
];

#[cfg(test)]
mod tests {
    use super::super::reference_bits::{assert_table_is, assert_within_an_ulp};
    use super::*;

    /// Each entry against `tests/reference/fixtures/log_table.csv`, whose
    /// every entry `tests/reference/log.py` checked in 60-digit decimal.
    #[test]
    fn the_table_is_the_reference() {
        let csv = include_str!("../../tests/reference/fixtures/log_table.csv");
        assert_table_is(csv, &TABLE, ["1/c", "ln c"]);
    }

    /// Logarithms correctly rounded in 60-digit decimal arithmetic
    /// (`tests/reference/log.py`), over the normal doubles and densely
    /// where the normal quantile's tails take them: within one ulp
    /// everywhere, the rounded value nearly always.
    #[test]
    fn within_an_ulp_of_the_correctly_rounded() {
        let csv = include_str!("../../tests/reference/fixtures/log_values.csv");
        assert_within_an_ulp(csv, ln, 6000);
    }

    /// IEEE 754's edges, off the table path: ln 1 = 0, ln 0 = −∞, a
    /// negative argument NaN; ln e rounds to 1 and ln 2 to `LN_2`; the
    /// least subnormal, 2⁻¹⁰⁷⁴, gives −1074 ln 2 = −744.440071921381.
    #[test]
    fn the_edges() {
        assert_eq!(ln(1.0), 0.0);
        assert_eq!(ln(0.0), f64::NEG_INFINITY);
        assert_eq!(ln(f64::INFINITY), f64::INFINITY);
        assert!(ln(-1.0).is_nan() && ln(f64::NAN).is_nan());
        assert_eq!(ln(std::f64::consts::E), 1.0);
        assert_eq!(ln(2.0), std::f64::consts::LN_2);
        assert!((ln(5e-324) + 744.440_071_921_381).abs() < 1e-12);
    }

    /// The C library's own, where it takes its build for CPUs with FMA
    /// (glibc 2.28 on, x86-64 with AVX2 and FMA): the same bits, over a
    /// million arguments across the normal doubles and over (0, 0.075].
    #[cfg(all(target_arch = "x86_64", target_os = "linux", target_env = "gnu"))]
    #[test]
    fn the_c_librarys_bits_where_it_fuses() {
        if !super::super::reference_bits::c_library_fuses() {
            return;
        }
        let mut state = 0x9e37_79b9_7f4a_7c15_u64;
        for k in 0..1_000_000 {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            let x = if k % 2 == 0 {
                f64::from_bits((1 + (state >> 53) % 2046) << 52 | (state & ((1 << 52) - 1)))
            } else {
                (state >> 11) as f64 / (1u64 << 53) as f64 * 0.075 + 2f64.powi(-54)
            };
            assert_eq!(ln(x).to_bits(), x.ln().to_bits(), "ln({x:e})");
        }
    }
}
