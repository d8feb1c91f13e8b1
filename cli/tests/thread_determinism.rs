//! Determinism of the parallel element loops (issue 7, "Must show"): the
//! demo section (bundles, spacers, strings, interphase spacers, earth wire,
//! iced conductors in a cross wind) run for one second on one thread and on
//! two gives results files equal bit for bit, dataset by dataset and
//! attribute by attribute (h5py and NumPy in tests/python/h5_equal.py,
//! less the wall-time attribute), and so does a second run on two threads.

mod common;

use common::{python, repo, text, BIN};
use std::path::Path;
use std::process::Command;

fn run(input: &Path, out: &Path, threads: &str) {
    let o = Command::new(BIN)
        .args(["run", input.to_str().unwrap(), "--out", out.to_str().unwrap(), "-q"])
        .env("RAYON_NUM_THREADS", threads)
        .output()
        .expect("run glaze");
    assert!(o.status.success(), "glaze run on {threads} thread(s) failed:\n{}", text(&o));
}

#[test]
fn one_and_two_threads_give_the_same_results_bit_for_bit() {
    let examples = repo().join("examples");
    let demo = std::fs::read_to_string(examples.join("section_five_spans.toml")).unwrap();
    let short = demo
        .replacen("duration = 30.0", "duration = 1.0", 1)
        .replace("\"aero/", &format!("\"{}/", examples.join("aero").display()));
    assert_ne!(short, demo, "the demo's [dynamics] changed; update this test");
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("demo_1s.toml");
    std::fs::write(&input, short).unwrap();
    let (one, two, again) =
        (dir.path().join("one.h5"), dir.path().join("two.h5"), dir.path().join("again.h5"));
    run(&input, &one, "1");
    run(&input, &two, "2");
    run(&input, &again, "2");
    for (a, b, what) in [(&one, &two, "1 against 2 threads"), (&two, &again, "two runs on 2 threads")] {
        let cmp = python("h5_equal.py", &[a, b]);
        assert_eq!(cmp["equal"], true, "{what}: {cmp}");
        assert!(cmp["datasets"].as_u64().unwrap() > 10, "{cmp}");
    }
}
