//! Property-based fuzzing of the loaders (issue 8): the TOML input loader
//! (`input::load_str`, then `model::build` on what validates) and the
//! coefficient-table reader (`CoefficientTable::from_csv_str`, then
//! evaluation) must return `Ok` or a located `Err` for any text, never
//! panic. Inputs are the shipped examples with lines deleted, duplicated or
//! swapped, numbers replaced by extremes (NaN, ±inf, negative, huge, tiny,
//! other types), keys swapped, the text truncated or random bytes inserted;
//! and random CSV tables.
//!
//! The case counts are bounded so the file runs in well under a minute in
//! release on two cores (`cargo test --release --test fuzz_loaders`). To
//! search longer, set `PROPTEST_CASES` (cases per property), e.g.
//! `PROPTEST_CASES=200000 cargo test --release --test fuzz_loaders`.
//! A failure prints the shrunk input; every panic found is kept below as a
//! named regression test with its minimal input.

use glaze_aero::{CoefficientTable, Interpolation, TableOptions};
use glaze_engine::spec::{MeshDensity, SectionSpec};
use glaze_engine::{input, model, ElementRegistry};
use proptest::prelude::*;
use proptest::test_runner::Config;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};

/// Cases per property: `PROPTEST_CASES`, else `default`.
fn config(default: u32) -> Config {
    let cases = std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(default);
    Config { cases, failure_persistence: None, ..Config::default() }
}

const EXAMPLES: [&str; 4] =
    ["row_of_spans.toml", "section_five_spans.toml", "iced_span_screening.toml", "iced_span_galloping.toml"];
const TABLES: [&str; 2] = ["bare_round.csv", "crescent_ice.csv"];

fn examples_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples")
}

fn read(path: &Path) -> String {
    std::fs::read_to_string(path).expect("shipped file")
}

/// Replacements for a number: extremes, wrong signs, other TOML types.
const EXTREMES: [&str; 28] = [
    "nan",
    "inf",
    "-inf",
    "+inf",
    "-1.0",
    "-1",
    "0",
    "0.0",
    "-0.0",
    "1",
    "2",
    "3",
    "1e308",
    "-1e308",
    "1e-308",
    "5e-324",
    "1e-300",
    "1e20",
    "100000",
    "4294967296",
    "9223372036854775807",
    "-9223372036854775808",
    "\"text\"",
    "[]",
    "[1.0, 2.0]",
    "{}",
    "true",
    "",
];

/// One edit of a text; indices are taken modulo what the text holds.
#[derive(Clone, Debug)]
enum Edit {
    DeleteLine(usize),
    DuplicateLine(usize),
    SwapLines(usize, usize),
    ReplaceNumber(usize, String),
    SwapKeys(usize, usize),
    Truncate(usize),
    Insert(usize, String),
}

fn number_text() -> impl Strategy<Value = String> {
    prop_oneof![
        4 => proptest::sample::select(&EXTREMES[..]).prop_map(str::to_string),
        1 => any::<f64>().prop_map(|v| format!("{v:?}")),
        1 => any::<i64>().prop_map(|v| v.to_string()),
        1 => (-1000.0..1000.0f64).prop_map(|v| format!("{v:.3}")),
    ]
}

fn edit() -> impl Strategy<Value = Edit> {
    let n = 0..10_000usize;
    prop_oneof![
        2 => n.clone().prop_map(Edit::DeleteLine),
        1 => n.clone().prop_map(Edit::DuplicateLine),
        1 => (n.clone(), n.clone()).prop_map(|(a, b)| Edit::SwapLines(a, b)),
        5 => (n.clone(), number_text()).prop_map(|(a, t)| Edit::ReplaceNumber(a, t)),
        1 => (n.clone(), n.clone()).prop_map(|(a, b)| Edit::SwapKeys(a, b)),
        1 => (0..100_000usize).prop_map(Edit::Truncate),
        1 => (0..100_000usize, "[ -~\né€]{0,12}").prop_map(|(a, t)| Edit::Insert(a, t)),
        1 => (0..100_000usize, any::<Vec<u8>>())
            .prop_map(|(a, b)| Edit::Insert(a, String::from_utf8_lossy(&b).into_owned())),
    ]
}

/// Byte ranges of the numbers in `text` (a digit run with sign, point and
/// exponent; good enough to hit every value of the examples).
fn numbers(text: &str) -> Vec<std::ops::Range<usize>> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let starts =
            b[i].is_ascii_digit() && (i == 0 || !(b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_'));
        if !starts {
            i += 1;
            continue;
        }
        let start = if i > 0 && b[i - 1] == b'-' { i - 1 } else { i };
        let mut j = i;
        while j < b.len()
            && (b[j].is_ascii_digit()
                || b"._eE".contains(&b[j])
                || (b"+-".contains(&b[j]) && b"eE".contains(&b[j - 1])))
        {
            j += 1;
        }
        out.push(start..j);
        i = j;
    }
    out
}

fn floor_boundary(text: &str, mut i: usize) -> usize {
    i = i.min(text.len());
    while !text.is_char_boundary(i) {
        i -= 1;
    }
    i
}

fn apply(text: &str, edit: &Edit) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let n = lines.len().max(1);
    match edit {
        Edit::DeleteLine(a) if !lines.is_empty() => {
            lines.remove(a % n);
        }
        Edit::DuplicateLine(a) if !lines.is_empty() => {
            let l = lines[a % n].clone();
            lines.insert(a % n, l);
        }
        Edit::SwapLines(a, b) if !lines.is_empty() => lines.swap(a % n, b % n),
        Edit::SwapKeys(a, b) => {
            let keyed: Vec<usize> = (0..lines.len()).filter(|&i| lines[i].contains('=')).collect();
            if !keyed.is_empty() {
                let (i, j) = (keyed[a % keyed.len()], keyed[b % keyed.len()]);
                let split = |l: &str| l.split_once('=').map(|(k, v)| (k.to_string(), v.to_string()));
                if let (Some((ki, vi)), Some((kj, vj))) = (split(&lines[i]), split(&lines[j])) {
                    lines[i] = format!("{kj}={vi}");
                    lines[j] = format!("{ki}={vj}");
                }
            }
        }
        Edit::ReplaceNumber(a, t) => {
            let spans = numbers(text);
            if spans.is_empty() {
                return text.to_string();
            }
            let r = spans[a % spans.len()].clone();
            return format!("{}{t}{}", &text[..r.start], &text[r.end..]);
        }
        Edit::Truncate(a) => return text[..floor_boundary(text, a % (text.len() + 1))].to_string(),
        Edit::Insert(a, t) => {
            let i = floor_boundary(text, a % (text.len() + 1));
            return format!("{}{t}{}", &text[..i], &text[i..]);
        }
        _ => {}
    }
    let mut out = lines.join("\n");
    out.push('\n');
    out
}

/// Conductor elements the model of `spec` would have, roughly; models
/// above a bound are not built (the fuzz run stays short).
fn element_estimate(spec: &SectionSpec) -> f64 {
    let per_span = |l: f64| match spec.mesh {
        MeshDensity::ElementsPerSpan(n) => n as f64,
        MeshDensity::ElementLength(e) => (l / e).ceil().max(2.0),
    };
    match &spec.section {
        Some(s) => {
            let wires: f64 = s.phases.iter().map(|p| p.bundle.count as f64).sum();
            (0..s.span_count()).map(|i| per_span(s.span_length(i)) * wires).sum()
        }
        None => spec
            .spans
            .iter()
            .map(|s| {
                let d = spec.supports[s.to].position - spec.supports[s.from].position;
                per_span(d.x.hypot(d.y))
            })
            .sum(),
    }
}

/// How far one input got.
struct Reached {
    validated: bool,
    built: bool,
}

/// Loads `text` as if read from `path`; builds the model when it validates
/// and is small. `Err` holds the panic message.
fn load_and_build(path: &Path, text: &str, registry: &ElementRegistry) -> Result<Reached, String> {
    let loaded = catch_unwind(AssertUnwindSafe(|| input::load_str(path, text, registry)))
        .map_err(|p| format!("input::load_str panicked: {}", panic_text(&p)))?;
    let mut reached = Reached { validated: loaded.is_ok(), built: false };
    if let Ok(spec) = loaded {
        if element_estimate(&spec) <= 20_000.0 {
            reached.built = catch_unwind(AssertUnwindSafe(|| model::build(&spec, registry).is_ok()))
                .map_err(|p| format!("model::build panicked: {}", panic_text(&p)))?;
        }
    }
    Ok(reached)
}

fn panic_text(p: &Box<dyn std::any::Any + Send>) -> String {
    p.downcast_ref::<String>()
        .cloned()
        .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
        .unwrap_or_default()
}

/// Reads `text` as a table with `options`, then evaluates it at angles
/// around and outside its range. `Err` holds the panic message.
fn read_and_evaluate(text: &str, options: &TableOptions, angles: &[f64]) -> Result<(), String> {
    catch_unwind(AssertUnwindSafe(|| {
        if let Ok(t) = CoefficientTable::from_csv_str(text, "<fuzz>", options) {
            let (lo, hi) = t.alpha_range();
            let fixed = [
                lo,
                hi,
                0.5 * (lo + hi),
                lo - 1e-9,
                hi + 1e-9,
                hi + 1.0,
                1e300,
                -1e300,
                f64::NAN,
                f64::INFINITY,
            ];
            for &a in fixed.iter().chain(angles) {
                let _ = t.evaluate_with_derivative(a);
                let _ = t.den_hartog(a);
            }
        }
    }))
    .map_err(|p| format!("coefficient table panicked: {}", panic_text(&p)))
}

fn options() -> impl Strategy<Value = TableOptions> {
    (
        prop_oneof![Just(Interpolation::Linear), Just(Interpolation::MonotoneCubic)],
        prop_oneof![
            3 => Just(None),
            1 => Just(Some(0.03)),
            1 => any::<f64>().prop_map(Some),
        ],
        prop_oneof![Just(30f64.to_radians()), Just(f64::INFINITY), Just(1e-3), any::<f64>()],
    )
        .prop_map(|(interpolation, reference_diameter, max_spacing)| TableOptions {
            interpolation,
            reference_diameter,
            max_spacing,
        })
}

/// A random CSV table: optional BOM and comments, a header of known and
/// unknown columns, rows of angles and coefficients (sometimes 360° wide,
/// sometimes disordered), numbers from the extremes or any f64. Most
/// tables are well formed (the required columns, rows as wide as the
/// header, a reference diameter) so that reading gets past the header.
fn csv_table() -> impl Strategy<Value = String> {
    let columns = prop_oneof![
        3 => (any::<bool>(), any::<bool>()).prop_map(|(cm, extra)| {
            let mut h = vec!["alpha_deg", "cd", "cl"];
            if cm {
                h.push("cm");
            }
            if extra {
                h.push("\"Extra\"");
            }
            h
        }).prop_shuffle(),
        1 => proptest::sample::subsequence(vec!["alpha_deg", "cd", "cl", "cm", "extra", "\"CD\"", ""], 0..=7)
            .prop_shuffle(),
    ];
    let value = prop_oneof![
        8 => (-3.0..3.0f64).prop_map(|v| format!("{v:.4}")),
        1 => number_text(),
    ];
    let rows = proptest::collection::vec(proptest::collection::vec(value, 8), 0..24);
    let diameter = prop_oneof![3 => Just(Some("0.03".to_string())), 1 => proptest::option::of(number_text())];
    (
        any::<bool>(),
        diameter,
        columns,
        rows,
        (-400.0..400.0f64),
        prop_oneof![3 => Just(10.0), 1 => Just(30.0), 1 => Just(0.0), 1 => Just(-5.0), 1 => 0.0..90.0f64],
        any::<bool>(),
        prop_oneof![9 => Just(0i32), 1 => -2i32..3],
    )
        .prop_map(|(bom, diameter, header, rows, start, step, full_turn, width_error)| {
            let mut t = String::new();
            if bom {
                t.push('\u{feff}');
            }
            t.push_str("# a fuzzed table\n");
            if let Some(d) = diameter {
                t.push_str(&format!("# reference_diameter = {d}\n"));
            }
            t.push_str(&header.join(", "));
            t.push('\n');
            let width = (header.len() as i32 + width_error).clamp(0, 8) as usize;
            let alpha = header.iter().position(|h| *h == "alpha_deg").unwrap_or(0);
            let count = rows.len();
            let step = if full_turn && count > 1 { 360.0 / (count - 1) as f64 } else { step };
            for (i, mut row) in rows.into_iter().enumerate() {
                row.truncate(width);
                if let Some(a) = row.get_mut(alpha) {
                    *a = format!("{}", start + step * i as f64);
                }
                t.push_str(&row.join(","));
                t.push('\n');
            }
            t
        })
}

/// Random tables read to `Ok` or `Err`, and what reads evaluates anywhere;
/// some must read (the count is printed).
#[test]
fn random_tables_never_panic() {
    let read_ok = std::cell::Cell::new(0usize);
    let mut runner = proptest::test_runner::TestRunner::new(config(100_000));
    let strategy = (csv_table(), options(), proptest::collection::vec(any::<f64>(), 0..4));
    let result = runner.run(&strategy, |(text, options, angles)| {
        read_ok
            .set(read_ok.get() + CoefficientTable::from_csv_str(&text, "<fuzz>", &options).is_ok() as usize);
        read_and_evaluate(&text, &options, &angles)
            .map_err(|m| TestCaseError::fail(format!("{m}\n--- table, {options:?} ---\n{text}")))
    });
    let cases = runner.config().cases as usize;
    let read_ok = read_ok.get();
    eprintln!("random tables: {cases} cases, {read_ok} read and evaluated");
    if let Err(e) = result {
        panic!("{e}");
    }
    assert!(read_ok * 100 >= cases, "some random tables must read");
}

/// Edited examples load to `Ok` or `Err`, and what validates builds. The
/// counts are printed and checked so the run cannot pass without reaching
/// the validation and the model builder.
#[test]
fn edited_examples_never_panic() {
    use std::sync::atomic::{AtomicUsize, Ordering::Relaxed};
    let counts = [AtomicUsize::new(0), AtomicUsize::new(0), AtomicUsize::new(0)];
    let registry = ElementRegistry::with_builtin();
    let start = std::time::Instant::now();
    let mut runner = proptest::test_runner::TestRunner::new(config(50_000));
    let strategy = (0..EXAMPLES.len(), proptest::collection::vec(edit(), 1..4));
    let result = runner.run(&strategy, |(which, edits)| {
        let path = examples_dir().join(EXAMPLES[which]);
        let mut text = read(&path);
        for e in &edits {
            text = apply(&text, e);
        }
        counts[0].fetch_add(1, Relaxed);
        match load_and_build(&path, &text, &registry) {
            Ok(reached) => {
                counts[1].fetch_add(reached.validated as usize, Relaxed);
                counts[2].fetch_add(reached.built as usize, Relaxed);
                Ok(())
            }
            Err(m) => Err(TestCaseError::fail(format!("{m}\n--- input ({}) ---\n{text}", EXAMPLES[which]))),
        }
    });
    let [cases, validated, built] = counts.map(|c| c.into_inner());
    eprintln!(
        "edited examples: {cases} cases ({validated} validated, {built} models built) in {:.1} s",
        start.elapsed().as_secs_f64()
    );
    if let Err(e) = result {
        panic!("{e}");
    }
    assert!(validated * 20 >= cases && built * 40 >= cases, "the edits must leave some inputs valid");
}

proptest! {
    #![proptest_config(config(20_000))]

    /// Arbitrary text is never a panic for either loader.
    #[test]
    fn arbitrary_text_never_panics(text in prop_oneof![any::<String>(), "[ -~\n]{0,300}"]) {
        let registry = ElementRegistry::with_builtin();
        let path = examples_dir().join("fuzz.toml");
        prop_assert!(load_and_build(&path, &text, &registry).is_ok(), "{text:?}");
        prop_assert!(read_and_evaluate(&text, &TableOptions::default(), &[]).is_ok(), "{text:?}");
    }

    /// Edited shipped tables read to `Ok` or `Err`.
    #[test]
    fn edited_tables_never_panic(which in 0..TABLES.len(), edits in proptest::collection::vec(edit(), 1..5), options in options()) {
        let mut text = read(&examples_dir().join("aero").join(TABLES[which]));
        for e in &edits {
            text = apply(&text, e);
        }
        if let Err(m) = read_and_evaluate(&text, &options, &[]) {
            return Err(TestCaseError::fail(format!("{m}\n--- {} edited, {options:?} ---\n{text}", TABLES[which])));
        }
    }
}

// Regression tests: every panic the fuzzing found, with its minimal input.

/// Loads the shipped `name` with `from` replaced by `to`; `Ok` when neither
/// loading nor building panicked.
fn regression(name: &str, from: &str, to: &str) -> Reached {
    let path = examples_dir().join(name);
    let text = read(&path);
    assert_eq!(text.matches(from).count(), 1, "`{from}` once in {name}");
    let text = text.replacen(from, to, 1);
    load_and_build(&path, &text, &ElementRegistry::with_builtin()).unwrap_or_else(|m| panic!("{m}"))
}

/// Found by `edited_examples_never_panic`: ice 1e308 m thick passed
/// validation, and the iced diameter overflowed to infinity in the model
/// builder's built-in round table (`expect`). Now refused at
/// `load_case.ice.thickness` (at most 1 m).
#[test]
fn regression_ice_thickness_1e308() {
    let r = regression("row_of_spans.toml", "thickness = 0.0125", "thickness = 1e308");
    assert!(!r.validated);
}

/// Found by `edited_examples_never_panic`: a tower at chainage 1e20 m made
/// a span so long that the spacer positions asked for a vector of
/// impossible size (capacity overflow). Spans are now at most 20 km, and
/// at most 1000 spacers per span.
#[test]
fn regression_tower_chainage_1e20() {
    let r = regression("section_five_spans.toml", "chainage = 1880.0", "chainage = 1e20");
    assert!(!r.validated);
    let r = regression("section_five_spans.toml", "max_subspan = 60.0", "max_subspan = 1e-300");
    assert!(!r.validated);
}
