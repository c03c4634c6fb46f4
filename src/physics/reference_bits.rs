//! What the tests of the functions that reproduce the C library's bits
//! (`exp`, `log`) share: reading the reference fixtures' hexadecimal
//! bits, the within-an-ulp check against correctly rounded values, and
//! whether the C library here takes its build for CPUs with FMA.

/// A fixture cell's bits, written in hexadecimal with or without `0x`.
pub fn bits(cell: &str) -> u64 {
    u64::from_str_radix(cell.trim_start_matches("0x"), 16).expect("hex")
}

/// A table of 128 pairs of bits (`table[2i]`, `table[2i + 1]`) against
/// a fixture whose row i after the header is `i,first,second` in
/// hexadecimal; `names` says which is which in a failure.
pub fn assert_table_is(csv: &str, table: &[u64], names: [&str; 2]) {
    let rows: Vec<&str> = csv.lines().skip(1).collect();
    assert_eq!(rows.len(), 128);
    assert_eq!(table.len(), 2 * rows.len());
    for (i, row) in rows.iter().enumerate() {
        let cells: Vec<&str> = row.split(',').collect();
        assert_eq!(cells[0], i.to_string());
        assert_eq!(table[2 * i], bits(cells[1]), "{} {i}", names[0]);
        assert_eq!(table[2 * i + 1], bits(cells[2]), "{} {i}", names[1]);
    }
}

/// `f` of each row's x against its correctly rounded value (a fixture of
/// two hexadecimal cells, after a header): within one ulp everywhere, the
/// rounded value in 995 rows of 1 000 at least, over more than
/// `at_least` rows.
pub fn assert_within_an_ulp(csv: &str, f: impl Fn(f64) -> f64, at_least: usize) {
    let (mut rows, mut exact) = (0, 0);
    for row in csv.lines().skip(1) {
        let (x, want) = row.split_once(',').expect("two cells");
        let (x, want) = (f64::from_bits(bits(x)), f64::from_bits(bits(want)));
        let got = f(x);
        let ulps = got.to_bits().abs_diff(want.to_bits());
        assert!(ulps <= 1, "f({x:e}) = {got:e}, want {want:e}");
        rows += 1;
        exact += usize::from(ulps == 0);
    }
    assert!(
        rows > at_least && exact * 1000 >= rows * 995,
        "{exact} of {rows}"
    );
}

/// Whether the C library takes its build for CPUs with FMA here (glibc
/// 2.28 on, x86-64 with AVX2 and FMA): where its bits are the ones to
/// match.
#[cfg(all(target_arch = "x86_64", target_os = "linux", target_env = "gnu"))]
pub fn c_library_fuses() -> bool {
    std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
}
