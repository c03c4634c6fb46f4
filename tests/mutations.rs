//! Random edits of the demo specs never panic: every mutant gets findings
//! or none, through the same path `catena check` takes.

mod common;

use catena::check::check_bytes;
use catena::model::PartsCache;
use proptest::prelude::*;

fn demo_texts() -> Vec<Vec<u8>> {
    common::demo_specs()
        .into_iter()
        .map(|p| std::fs::read(p).expect("readable"))
        .collect()
}

#[derive(Debug, Clone)]
enum Edit {
    Delete { at: usize, len: usize },
    Insert { at: usize, bytes: Vec<u8> },
    Duplicate { at: usize, len: usize },
    Swap { a: usize, b: usize },
}

fn edit() -> impl Strategy<Value = Edit> {
    let piece = prop_oneof![
        Just(b"{".to_vec()),
        Just(b"}".to_vec()),
        Just(b"->".to_vec()),
        Just(b"\xc2\xb1".to_vec()),
        Just(b"..".to_vec()),
        Just(b"\"".to_vec()),
        Just(b"#".to_vec()),
        Just(b"\n".to_vec()),
        Just(b"1e999".to_vec()),
        Just(b" dB ".to_vec()),
        Just(b"\xff".to_vec()),
        Just(b" max".to_vec()),
        proptest::collection::vec(any::<u8>(), 1..8),
    ];
    prop_oneof![
        (any::<usize>(), 1usize..40).prop_map(|(at, len)| Edit::Delete { at, len }),
        (any::<usize>(), piece).prop_map(|(at, bytes)| Edit::Insert { at, bytes }),
        (any::<usize>(), 1usize..200).prop_map(|(at, len)| Edit::Duplicate { at, len }),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Edit::Swap { a, b }),
    ]
}

fn apply(text: &mut Vec<u8>, e: &Edit) {
    if text.is_empty() {
        return;
    }
    let n = text.len();
    match e {
        Edit::Delete { at, len } => {
            let at = at % n;
            let end = (at + len).min(n);
            text.drain(at..end);
        }
        Edit::Insert { at, bytes } => {
            let at = at % (n + 1);
            text.splice(at..at, bytes.iter().copied());
        }
        Edit::Duplicate { at, len } => {
            let at = at % n;
            let end = (at + len).min(n);
            let copy = text[at..end].to_vec();
            text.splice(end..end, copy);
        }
        Edit::Swap { a, b } => text.swap(a % n, b % n),
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, ..ProptestConfig::default() })]

    #[test]
    fn random_edits_never_panic(spec in 0usize..16, edits in proptest::collection::vec(edit(), 1..6)) {
        let texts = demo_texts();
        let mut text = texts[spec % texts.len()].clone();
        for e in &edits {
            apply(&mut text, e);
        }
        let base = common::root().join("specs");
        let checked = check_bytes("mutant.catena", &text, &base, &mut PartsCache::default());
        for f in checked.findings.iter() {
            prop_assert!(!f.message.is_empty());
        }
        if let Ok(s) = std::str::from_utf8(&text) {
            let _ = catena::syntax::format::format_source(s);
        }
    }
}
