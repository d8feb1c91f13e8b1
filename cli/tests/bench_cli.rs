//! `glaze bench` as a user runs it: a record of a small generated case,
//! the same run again compared `--against` it (same fingerprint: the run
//! is deterministic), and a changed run flagged with exit code 7. The DOF
//! in the record is checked against the node table of the kept results
//! file, read with h5py.

mod common;

use common::*;
use std::process::Command;

#[test]
fn bench_records_compare_on_speed_and_answer() {
    let dir = tempfile::tempdir().expect("temp dir");
    let d = dir.path();
    let run = |out: &str, duration: &str, against: Option<&str>| {
        let mut args = vec![
            "bench",
            "--cases",
            "s1p2b2",
            "--duration",
            duration,
            "--out",
            out,
            "--work",
            "work",
            "--keep",
        ];
        if let Some(a) = against {
            args.extend(["--against", a]);
        }
        Command::new(BIN).args(&args).current_dir(d).output().expect("glaze bench")
    };
    let o = run("first.json", "1.0", None);
    assert!(o.status.success(), "{}", text(&o));
    let rec: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("first.json")).expect("record")).expect("JSON");
    assert_eq!(rec["format"], "glaze-bench");
    let case = &rec["cases"][0];
    assert_eq!(case["name"], "s1p2b2");
    assert_eq!(case["steps"], 100, "1 s at Δt = 0.01 s");
    assert!(case["steps_per_s"].as_f64().unwrap() > 0.0 && case["peak_memory_bytes"].as_u64().unwrap() > 0);

    // DOF = 6 per node of the model the run wrote.
    let script = "import h5py, sys, json; f = h5py.File(sys.argv[1]); print(json.dumps({'nodes': f['model/node_position'].shape[0]}))";
    let o = Command::new("python3")
        .args(["-c", script])
        .arg(d.join("work/s1p2b2/result.h5"))
        .output()
        .expect("python3");
    assert!(o.status.success(), "{}", text(&o));
    let nodes: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    assert_eq!(case["dof"].as_u64().unwrap(), 6 * nodes["nodes"].as_u64().unwrap());

    let o = run("second.json", "1.0", Some("first.json"));
    assert!(o.status.success(), "the same run must give the same fingerprint:\n{}", text(&o));
    assert!(String::from_utf8_lossy(&o.stdout).contains("same"), "{}", text(&o));

    let o = run("third.json", "0.5", Some("first.json"));
    assert_eq!(o.status.code(), Some(7), "a changed answer is flagged:\n{}", text(&o));
    assert!(String::from_utf8_lossy(&o.stdout).contains("CHANGED"), "{}", text(&o));

    let o = Command::new(BIN).args(["bench", "--cases", "s9p9b9"]).current_dir(d).output().expect("glaze");
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));

    // The phases of the stepping add up to at most its wall time.
    let p = &case["phases"];
    let parts: f64 = ["elements_s", "aerodynamics_s", "factorisation_s", "solve_s", "output_s", "other_s"]
        .iter()
        .map(|k| p[*k].as_f64().unwrap())
        .inspect(|&x| assert!(x >= 0.0, "{p}"))
        .sum();
    let stepping = case["dynamic_s"].as_f64().unwrap();
    assert!(parts <= 1.05 * stepping && p["floor_per_step_s"].as_f64().unwrap() > 0.0, "{p} of {stepping} s");

    // Two sizes: the fitted growth and its log–log chart.
    let o = Command::new(BIN)
        .args([
            "bench",
            "--cases",
            "s1p1b2,s2p1b2",
            "--duration",
            "0.2",
            "--out",
            "two.json",
            "--work",
            "work",
        ])
        .current_dir(d)
        .output()
        .expect("glaze bench");
    assert!(o.status.success(), "{}", text(&o));
    assert!(String::from_utf8_lossy(&o.stdout).contains("time per step grows as DOF^"), "{}", text(&o));
    let svg = std::fs::read_to_string(d.join("two.svg")).expect("the chart beside the record");
    assert!(svg.starts_with("<svg") && svg.contains("fitted slope"), "{}", &svg[..svg.len().min(200)]);
}
