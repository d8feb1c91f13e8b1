//! Root package of the glaze workspace: it holds only the cross-crate validation tests in `tests/` and the benchmarks in `benches/`.
