//! `BandedLu` and `reverse_cuthill_mckee` against SciPy/NumPy, computed
//! independently by `tests/python/check_banded.py`:
//!
//! - solutions of a non-symmetric, structurally symmetric sparse system that
//!   needs row interchanges against `numpy.linalg.solve` (LAPACK dgesv,
//!   checked there against `scipy.sparse.linalg.spsolve`), to 1e-10 relative;
//! - the bandwidth of our RCM ordering against that of
//!   `scipy.sparse.csgraph.reverse_cuthill_mckee` on a randomly numbered 2-D
//!   grid and chain-of-ladders patterns (bundles of parallel cables with
//!   spacers): ours ≤ 1.1 × SciPy's + 1.
//!
//! Python 3 with numpy and scipy is required (`scripts/setup.sh` installs
//! them). A missing Python or SciPy is a failure, never a silent pass.

use glaze_solvers::{
    bandwidths, reverse_cuthill_mckee, BandOrdering, BandedLu, Factorisation, LinearSolver, SparsityPattern,
};
use std::path::{Path, PathBuf};
use std::process::Command;

/// 64-bit LCG (Knuth's MMIX constants), high bits out.
struct Lcg(u64);

impl Lcg {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
        self.0
    }
    fn symmetric(&mut self) -> f64 {
        2.0 * ((self.next_u64() >> 11) as f64 / (1u64 << 53) as f64) - 1.0
    }
    fn below(&mut self, n: usize) -> usize {
        ((self.next_u64() >> 32) as usize) % n
    }
    fn shuffled(&mut self, n: usize) -> Vec<usize> {
        let mut v: Vec<usize> = (0..n).collect();
        for i in (1..n).rev() {
            v.swap(i, self.below(i + 1));
        }
        v
    }
}

fn pattern_of(n: usize, groups: &[Vec<usize>]) -> SparsityPattern {
    let groups: Vec<Vec<Option<usize>>> =
        groups.iter().map(|g| g.iter().copied().map(Some).collect()).collect();
    SparsityPattern::from_dof_groups(n, groups.iter().map(|g| g.as_slice()))
}

fn temp_file(name: &str) -> PathBuf {
    Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("banded_scipy_{}_{name}", std::process::id()))
}

/// Runs `tests/python/check_banded.py MODE FILE` and returns its standard output.
fn check_banded(mode: &str, file: &Path) -> String {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("../tests/python/check_banded.py");
    let py = Command::new("python3").arg(&script).arg(mode).arg(file).output().unwrap_or_else(|e| {
        panic!("python3 is needed for the SciPy banded-LU cross-check ({e}); run scripts/setup.sh")
    });
    let stdout = String::from_utf8_lossy(&py.stdout).into_owned();
    let stderr = String::from_utf8_lossy(&py.stderr);
    assert!(
        !stderr.contains("ModuleNotFoundError"),
        "numpy and scipy are needed for the SciPy banded-LU cross-check; run scripts/setup.sh:\n{stderr}"
    );
    assert!(py.status.success(), "check_banded.py {mode} failed:\n{stdout}\n{stderr}");
    stdout
}

/// "n nnz", then "i j [a_ij]" per entry, then the right-hand side.
fn write_matrix(path: &Path, p: &SparsityPattern, values: Option<&[f64]>, rhs: &[f64]) {
    let mut s = format!("{} {}\n", p.dim(), p.nnz());
    for j in 0..p.dim() {
        for k in p.col_ptr()[j]..p.col_ptr()[j + 1] {
            match values {
                Some(v) => s += &format!("{} {j} {:e}\n", p.row_idx()[k], v[k]),
                None => s += &format!("{} {j}\n", p.row_idx()[k]),
            }
        }
    }
    for b in rhs {
        s += &format!("{b:e}\n");
    }
    std::fs::write(path, s).unwrap();
}

fn norm_inf(x: &[f64]) -> f64 {
    x.iter().fold(0.0, |m: f64, v| m.max(v.abs()))
}

#[test]
fn solution_agrees_with_numpy_on_a_system_that_needs_pivoting() {
    let mut rng = Lcg(0x5eed_0b20);
    let n = 120;
    // Banded-ish: a chain plus groups of 2–5 equations within ±8 of a centre.
    let mut groups: Vec<Vec<usize>> = (0..n - 1).map(|i| vec![i, i + 1]).collect();
    for _ in 0..60 {
        let c = rng.below(n);
        let m = 2 + rng.below(4);
        groups.push((0..m).map(|_| (c + rng.below(17)).saturating_sub(8).min(n - 1)).collect());
    }
    let p = pattern_of(n, &groups);
    let mut values: Vec<f64> = (0..p.nnz()).map(|_| rng.symmetric()).collect();
    let diag = p.diagonal_indices();
    for &d in &diag {
        values[d] *= 1e-3;
    }
    // The first elimination step of both orderings meets an exactly zero
    // diagonal: LU without row interchanges does not exist.
    let natural = BandedLu::new(&p, BandOrdering::Natural);
    let rcm = BandedLu::new(&p, BandOrdering::ReverseCuthillMcKee);
    values[diag[natural.permutation()[0]]] = 0.0;
    values[diag[rcm.permutation()[0]]] = 0.0;
    let b: Vec<f64> = (0..n).map(|_| rng.symmetric()).collect();

    let file = temp_file("solve.txt");
    write_matrix(&file, &p, Some(&values), &b);
    let out = check_banded("solve", &file);
    let _ = std::fs::remove_file(&file);
    let mut lines = out.lines();
    let cond: f64 = lines.next().and_then(|l| l.strip_prefix("cond2 ")).unwrap().parse().unwrap();
    let reference: Vec<f64> = lines.map(|l| l.parse().unwrap()).collect();
    assert_eq!(reference.len(), n);
    // Forward error ≲ κ · growth · n ε: 1e-10 is meaningful for κ below ~1e4.
    println!("cond2(A) = {cond:.3e} (numpy.linalg.cond)");
    assert!(cond < 1e4, "test matrix too ill-conditioned for a 1e-10 comparison: {cond:e}");

    for mut lu in [natural, rcm] {
        assert_eq!(lu.factor(&values).unwrap(), Factorisation::Lu);
        let mut x = b.clone();
        lu.solve_in_place(&mut x).unwrap();
        let diff: Vec<f64> = x.iter().zip(&reference).map(|(a, r)| a - r).collect();
        let rel = norm_inf(&diff) / norm_inf(&reference);
        println!("bandwidths {:?}: relative difference to numpy {rel:.2e}", lu.bandwidths());
        assert!(rel <= 1e-10, "bandwidths {:?}: relative difference {rel:e}", lu.bandwidths());
    }
}

fn is_permutation(perm: &[usize], n: usize) -> bool {
    let mut seen = vec![false; n];
    perm.len() == n && perm.iter().all(|&p| p < n && !std::mem::replace(&mut seen[p], true))
}

/// Our RCM bandwidth and SciPy's on `p`.
fn rcm_against_scipy(name: &str, p: &SparsityPattern) -> ((usize, usize), (usize, usize)) {
    let perm = reverse_cuthill_mckee(p);
    assert!(is_permutation(&perm, p.dim()), "{name}: not a permutation");
    let ours = bandwidths(p, &perm);
    let file = temp_file(&format!("rcm_{name}.txt"));
    write_matrix(&file, p, None, &[]);
    let out = check_banded("rcm", &file);
    let _ = std::fs::remove_file(&file);
    let bw: Vec<usize> =
        out.trim().strip_prefix("bandwidth ").unwrap().split(' ').map(|t| t.parse().unwrap()).collect();
    let scipy = (bw[0], bw[1]);
    let natural: Vec<usize> = (0..p.dim()).collect();
    println!(
        "{name}: n = {}, natural {:?}, ours {ours:?}, SciPy {scipy:?}",
        p.dim(),
        bandwidths(p, &natural)
    );
    for (o, s) in [(ours.0, scipy.0), (ours.1, scipy.1)] {
        assert!(o as f64 <= 1.1 * s as f64 + 1.0, "{name}: our RCM bandwidth {ours:?}, SciPy's {scipy:?}");
    }
    (ours, scipy)
}

#[test]
fn rcm_bandwidth_of_a_shuffled_grid_is_no_worse_than_scipys() {
    let mut rng = Lcg(0x5eed_0b21);
    let (rows, cols) = (30, 40);
    let label = rng.shuffled(rows * cols);
    let node = |r: usize, c: usize| label[r * cols + c];
    let mut groups = Vec::new();
    for r in 0..rows {
        for c in 0..cols {
            if r + 1 < rows {
                groups.push(vec![node(r, c), node(r + 1, c)]);
            }
            if c + 1 < cols {
                groups.push(vec![node(r, c), node(r, c + 1)]);
            }
        }
    }
    let p = pattern_of(rows * cols, &groups);
    let (ours, _) = rcm_against_scipy("grid_30x40", &p);
    // No numbering of the m × n grid graph has bandwidth below min(m, n)
    // (Chvátalová 1975, "Optimal labelling of a product of two paths",
    // Discrete Math. 11, 249–253).
    assert!(ours.0 >= rows && ours.1 >= rows, "{ours:?} below the optimum {rows}");
}

/// `cables` parallel chains of `nodes` nodes, `dofs` equations per node, each
/// link a group of 2·dofs equations; every `spacing` nodes a spacer couples
/// node s of each cable to node s of the next (around the bundle), randomly
/// numbered.
fn ladder_bundle(rng: &mut Lcg, cables: usize, nodes: usize, dofs: usize, spacing: usize) -> SparsityPattern {
    let n = cables * nodes * dofs;
    let label = rng.shuffled(cables * nodes);
    let eqs = |cable: usize, s: usize| -> Vec<usize> {
        let base = label[cable * nodes + s] * dofs;
        (base..base + dofs).collect()
    };
    let mut groups = Vec::new();
    for cable in 0..cables {
        for s in 0..nodes - 1 {
            groups.push([eqs(cable, s), eqs(cable, s + 1)].concat());
        }
    }
    for s in (0..nodes).step_by(spacing) {
        for cable in 0..cables {
            let next = (cable + 1) % cables;
            if next != cable {
                groups.push([eqs(cable, s), eqs(next, s)].concat());
            }
        }
    }
    pattern_of(n, &groups)
}

#[test]
fn rcm_bandwidth_of_shuffled_cable_bundles_is_no_worse_than_scipys() {
    let mut rng = Lcg(0x5eed_0b22);
    // Twin, quad and six-conductor bundles, spacers every 10 or 25 nodes.
    for (cables, nodes, dofs, spacing) in [(2, 400, 1, 10), (4, 300, 1, 10), (6, 200, 1, 25), (4, 120, 6, 10)]
    {
        let p = ladder_bundle(&mut rng, cables, nodes, dofs, spacing);
        rcm_against_scipy(&format!("bundle_{cables}x{nodes}x{dofs}_every_{spacing}"), &p);
    }
}
