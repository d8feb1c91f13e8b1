//! `glaze sweep` and `glaze compare` as a user runs them: separate
//! processes, shards side by side, an interrupted sweep rerun, and bad
//! study files. Results files are compared bit for bit by an independent
//! reader (h5py and NumPy, `tests/python/h5_equal.py`), and the comparison
//! table is recomputed from the case reports by `tests/python/compare_check.py`.
//!
//! The section is `tests/data/two_phase_span.toml` (one span, two phases,
//! invented for the tests).

mod common;

use common::*;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Six cases: two wind speeds and three layouts, one of them an overlay.
const SIX_CASES: &str = r#"
[cases]
wind_speeds = [6.0, 10.0]
layouts = ["none", "spacer", "shifted"]

[layouts.shifted]
from = "masses"
remove = [2]
move = [{ device = 1, distance = 150.0 }]
add = [{ type = "lumped_mass", span = 1, distance = 60.0, phase = "B", mass = 10.0 }]
"#;

#[test]
fn three_shards_as_separate_processes_equal_one_unsharded_sweep() {
    let dir = tempfile::tempdir().expect("temp dir");
    let whole = write_study(dir.path(), "whole", "whole_out", SIX_CASES);
    let sharded = write_study(dir.path(), "sharded", "sharded_out", SIX_CASES);
    let o = glaze(&["sweep", whole.to_str().unwrap(), "--jobs", "2"]);
    assert!(o.status.success(), "{}", text(&o));
    let children: Vec<_> = (1..=3)
        .map(|i| {
            Command::new(BIN)
                .args(["sweep", sharded.to_str().unwrap(), "--jobs", "1", "--shard", &format!("{i}/3")])
                .stdout(Stdio::piped())
                .stderr(Stdio::piped())
                .spawn()
                .expect("start a shard")
        })
        .collect();
    for c in children {
        let o = c.wait_with_output().expect("shard");
        assert!(o.status.success(), "{}", text(&o));
        assert!(String::from_utf8_lossy(&o.stdout).contains("2 cases run"), "{}", text(&o));
    }
    assert_eq!(complete_ids(&dir.path().join("whole_out")).len(), 6);
    assert_same_cases(&dir.path().join("whole_out"), &dir.path().join("sharded_out"));
}

#[test]
fn an_interrupted_sweep_reruns_only_what_is_not_complete() {
    let dir = tempfile::tempdir().expect("temp dir");
    // Eight cases of about a second each, one at a time.
    let body =
        "duration = 12.0\n[cases]\nwind_speeds = [5.0, 7.0, 9.0, 11.0]\nlayouts = [\"none\", \"masses\"]\n";
    let study = write_study(dir.path(), "cut", "cut_out", body);
    let out = dir.path().join("cut_out");
    let mut child = Command::new(BIN)
        .args(["sweep", study.to_str().unwrap(), "--jobs", "1"])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start the sweep");
    let start = Instant::now();
    while (!out.join("cases").exists() || complete_ids(&out).len() < 2)
        && start.elapsed() < Duration::from_secs(120)
    {
        std::thread::sleep(Duration::from_millis(20));
    }
    let killed = Command::new("kill").args(["-INT", &child.id().to_string()]).status().expect("kill");
    assert!(killed.success());
    let status = child.wait().expect("sweep");
    let done = complete_ids(&out);
    assert_eq!(
        status.code(),
        Some(130),
        "the sweep should stop on SIGINT with code 130 ({} cases done)",
        done.len()
    );
    assert!(done.len() >= 2 && done.len() < 8, "{} cases complete at the interruption", done.len());

    // Break one complete case: its results file is no longer readable.
    let broken = &done[0];
    std::fs::write(out.join("cases").join(broken).join("result.h5"), b"not an HDF5 file").expect("break");
    let mtimes: Vec<_> = done[1..]
        .iter()
        .map(|id| {
            std::fs::metadata(out.join("cases").join(id).join("result.h5")).unwrap().modified().unwrap()
        })
        .collect();

    let o = glaze(&["sweep", study.to_str().unwrap(), "--jobs", "2"]);
    assert!(o.status.success(), "{}", text(&o));
    let log = text(&o);
    assert!(
        log.contains(&format!("{} cases run, {} already complete", 8 - (done.len() - 1), done.len() - 1)),
        "{log}"
    );
    assert!(!log.contains(&format!("{broken}: complete, skipped")), "the broken case must be redone:\n{log}");
    for (id, t) in done[1..].iter().zip(&mtimes) {
        assert!(log.contains(&format!("{id}: complete, skipped")), "{log}");
        let now =
            std::fs::metadata(out.join("cases").join(id).join("result.h5")).unwrap().modified().unwrap();
        assert_eq!(&now, t, "complete case {id} was rewritten");
    }
    assert_eq!(complete_ids(&out).len(), 8);

    // The pieced-together sweep equals one run straight through.
    let straight = write_study(dir.path(), "straight", "straight_out", body);
    let o = glaze(&["sweep", straight.to_str().unwrap(), "--jobs", "2"]);
    assert!(o.status.success(), "{}", text(&o));
    assert_same_cases(&out, &dir.path().join("straight_out"));
}

#[test]
fn compare_names_missing_cases_then_ranks_as_recomputed_from_the_reports() {
    let dir = tempfile::tempdir().expect("temp dir");
    let study = write_study(dir.path(), "cmp", "cmp_out", SIX_CASES);
    let out = dir.path().join("cmp_out");
    let o = glaze(&["sweep", study.to_str().unwrap(), "--shard", "1/3"]);
    assert!(o.status.success(), "{}", text(&o));
    let o = glaze(&["compare", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(6), "compare of an unfinished study: {}", text(&o));
    let listed = String::from_utf8_lossy(&o.stdout).matches("not complete:").count();
    assert_eq!(listed, 4, "{}", text(&o));
    let md = std::fs::read_to_string(out.join("compare.md")).expect("compare.md");
    let ids =
        String::from_utf8_lossy(&glaze(&["sweep", study.to_str().unwrap(), "--list"]).stdout).to_string();
    for (k, id) in ids.lines().enumerate() {
        assert_eq!(md.contains(&format!("`{id}`: missing")), k % 3 != 0, "{id} in\n{md}");
    }

    let o = glaze(&["sweep", study.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o));
    let o = glaze(&["compare", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o));
    let html = std::fs::read_to_string(out.join("compare.html")).expect("compare.html");
    assert_eq!(html.matches("<tr class=\"layout\">").count(), 3);
    // Self-contained: plots inline, nothing to fetch (the SVG namespace URI is a name, not a fetch).
    assert!(html.contains("<svg"));
    for external in ["<script", "<link", "<img", "@import", "src=", "href=", "url("] {
        assert!(!html.contains(external), "the page holds {external}");
    }
    assert!(html.contains("never replace"), "the page carries the caution");

    let check = python("compare_check.py", &[&out]);
    let (reference, ours) = (&check["reference"], &check["glaze"]);
    assert_eq!(reference["order"], ours["order"], "{check}");
    for (name, r) in reference["layouts"].as_object().unwrap() {
        let g = &ours["layouts"][name];
        for key in ["cases", "complete", "inside"] {
            assert_eq!(r[key], g[key], "{name} {key}: {check}");
        }
        for key in ["p2p", "dist", "margin", "tension"] {
            let (a, b) = (r[key].as_f64().unwrap(), g[key].as_f64().unwrap());
            assert!((a - b).abs() <= 1e-12 * a.abs().max(1.0), "{name} {key}: {a} vs {b}");
        }
    }
}

#[test]
fn bad_studies_are_located_errors() {
    let dir = tempfile::tempdir().expect("temp dir");
    let unknown_device = "[cases]\nwind_speeds = [6.0]\nlayouts = [\"bad\"]\n\n[layouts.bad]\nfrom = \"none\"\nadd = [{ type = \"vortex_flag\", span = 1, distance = 50.0, phase = \"A\" }]\n";
    let study = write_study(dir.path(), "bad_device", "o1", unknown_device);
    let o = glaze(&["sweep", study.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    let msg = text(&o);
    assert!(msg.contains(&format!("{}:11: layouts.bad.add[0]", study.display())), "{msg}");
    assert!(msg.contains("vortex_flag"), "{msg}");
    assert!(!dir.path().join("o1").exists(), "nothing is written for a bad study");

    let unknown_layout = "[cases]\nwind_speeds = [6.0]\nlayouts = [\"nowhere\"]\n";
    let study = write_study(dir.path(), "bad_layout", "o2", unknown_layout);
    let msg = text(&glaze(&["sweep", study.to_str().unwrap()]));
    assert!(
        msg.contains(&format!("{}:7: cases.layouts[0]", study.display())) && msg.contains("nowhere"),
        "{msg}"
    );

    let bad_remove =
        "[cases]\nwind_speeds = [6.0]\nlayouts = [\"x\"]\n[layouts.x]\nfrom = \"masses\"\nremove = [3]\n";
    let study = write_study(dir.path(), "bad_remove", "o3", bad_remove);
    let msg = text(&glaze(&["sweep", study.to_str().unwrap()]));
    assert!(msg.contains("layouts.x.remove[0]") && msg.contains("devices 1…2"), "{msg}");

    let negative = "[cases]\nwind_speeds = [6.0, -2.0]\n";
    let study = write_study(dir.path(), "bad_speed", "o4", negative);
    let msg = text(&glaze(&["sweep", study.to_str().unwrap()]));
    assert!(msg.contains(&format!("{}:6: cases.wind_speeds[1]", study.display())), "{msg}");

    let ok = write_study(dir.path(), "fine", "o5", "[cases]\nwind_speeds = [6.0]\n");
    let o = glaze(&["sweep", ok.to_str().unwrap(), "--shard", "4/3"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("--shard 4/3"));
    let o = Command::new(BIN)
        .args(["sweep", ok.to_str().unwrap(), "--list"])
        .env("SLURM_ARRAY_TASK_ID", "7")
        .env("SLURM_ARRAY_TASK_MIN", "1")
        .env("SLURM_ARRAY_TASK_COUNT", "3")
        .output()
        .expect("glaze");
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));

    let o = glaze(&["compare", dir.path().to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(5), "{}", text(&o));
    assert!(text(&o).contains("no study.json"), "{}", text(&o));
}
