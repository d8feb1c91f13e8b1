//! What the command-line tests of studies share: running glaze, the test
//! study, and comparing two study folders case by case.

#![allow(dead_code)] // each test file uses its own part

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

pub const BIN: &str = env!("CARGO_BIN_EXE_glaze");

pub fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..").canonicalize().expect("repository root")
}

/// A study of the test section in `dir` (file `NAME.toml`, study name
/// "test study", so that two files differ only in their output folder),
/// writing into `dir/output`.
pub fn write_study(dir: &Path, name: &str, output: &str, body: &str) -> PathBuf {
    let base = repo().join("tests/data/two_phase_span.toml");
    let text = format!(
        "[study]\nname = \"test study\"\nbase = \"{}\"\noutput = \"{output}\"\n{body}",
        base.display()
    );
    let path = dir.join(format!("{name}.toml"));
    std::fs::write(&path, text).expect("write the study");
    path
}

pub fn glaze(args: &[&str]) -> Output {
    Command::new(BIN).args(args).output().expect("run glaze")
}

pub fn text(o: &Output) -> String {
    format!("{}{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr))
}

pub fn python(script: &str, args: &[&Path]) -> serde_json::Value {
    let path = repo().join("tests/python").join(script);
    let out = Command::new("python3")
        .arg(&path)
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("python3 is needed for {script} ({e}); run scripts/setup.sh"));
    assert!(
        out.status.success(),
        "{script} failed (h5py and numpy come from scripts/setup.sh):\n{}",
        text(&out)
    );
    serde_json::from_slice(&out.stdout).expect("the script prints JSON")
}

pub fn case_ids(out: &Path) -> Vec<String> {
    let mut ids: Vec<String> = std::fs::read_dir(out.join("cases"))
        .expect("cases folder")
        .map(|e| e.expect("entry").file_name().to_string_lossy().to_string())
        .collect();
    ids.sort();
    ids
}

pub fn complete_ids(out: &Path) -> Vec<String> {
    case_ids(out).into_iter().filter(|id| out.join("cases").join(id).join("case.json").exists()).collect()
}

/// A case's report without the path of its results file (which names the folder).
pub fn report_without_path(path: &Path) -> serde_json::Value {
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(path).expect("report.json")).expect("report JSON");
    v.as_object_mut().expect("object").remove("results_file");
    v
}

/// Every case of `a` and `b`: identical results files (bit for bit, all
/// datasets and attributes but the wall time), inputs, summaries and reports.
pub fn assert_same_cases(a: &Path, b: &Path) {
    let ids = case_ids(a);
    assert_eq!(ids, case_ids(b), "the two sweeps hold different cases");
    assert!(!ids.is_empty());
    for id in &ids {
        let (ca, cb) = (a.join("cases").join(id), b.join("cases").join(id));
        let eq = python("h5_equal.py", &[&ca.join("result.h5"), &cb.join("result.h5")]);
        assert_eq!(eq["equal"], true, "case {id}: results differ: {eq}");
        assert!(eq["datasets"].as_u64().unwrap() > 20, "case {id}: too few datasets compared: {eq}");
        for f in ["input.toml", "case.json"] {
            assert_eq!(
                std::fs::read(ca.join(f)).expect("file"),
                std::fs::read(cb.join(f)).expect("file"),
                "case {id}: {f} differs"
            );
        }
        assert_eq!(
            report_without_path(&ca.join("post/report.json")),
            report_without_path(&cb.join("post/report.json")),
            "case {id}: report differs"
        );
    }
}
