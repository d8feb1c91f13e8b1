//! Which slice of a study's cases one process runs: `--shard I/N` (1-based),
//! or, when that is not given, the array-job variables of the Slurm batch
//! scheduler (`SLURM_ARRAY_TASK_ID`, `SLURM_ARRAY_TASK_MIN`,
//! `SLURM_ARRAY_TASK_STEP`, `SLURM_ARRAY_TASK_COUNT`). Case k of the study
//! (0-based, study order) belongs to shard k mod N, so every shard gets a
//! mix of layouts and wind speeds.

use crate::StudyError;

/// One of `count` slices; `index` is 0-based.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// 0-based slice number.
    pub index: usize,
    /// Number of slices.
    pub count: usize,
}

impl Shard {
    /// The whole study.
    pub const ALL: Shard = Shard { index: 0, count: 1 };

    /// Parses `I/N` with 1 ≤ I ≤ N.
    pub fn parse(text: &str) -> Result<Self, StudyError> {
        let bad = || StudyError::Shard(format!("--shard {text}: give I/N with 1 ≤ I ≤ N, e.g. 2/3"));
        let (i, n) = text.split_once('/').ok_or_else(bad)?;
        let i: usize = i.trim().parse().map_err(|_| bad())?;
        let n: usize = n.trim().parse().map_err(|_| bad())?;
        if n == 0 || i == 0 || i > n {
            return Err(bad());
        }
        Ok(Self { index: i - 1, count: n })
    }

    /// The shard of a Slurm array task, from variables read by `var`
    /// (`None` when `SLURM_ARRAY_TASK_ID` is not set).
    pub fn from_scheduler(var: impl Fn(&str) -> Option<String>) -> Result<Option<Self>, StudyError> {
        let Some(id) = var("SLURM_ARRAY_TASK_ID") else { return Ok(None) };
        let num = |name: &str, default: Option<usize>| -> Result<usize, StudyError> {
            match var(name) {
                Some(v) => v
                    .trim()
                    .parse()
                    .map_err(|_| StudyError::Shard(format!("{name}={v} is not a whole number"))),
                None => default.ok_or_else(|| {
                    StudyError::Shard(format!(
                        "SLURM_ARRAY_TASK_ID is set but {name} is not; pass --shard I/N"
                    ))
                }),
            }
        };
        let id: usize = id
            .trim()
            .parse()
            .map_err(|_| StudyError::Shard(format!("SLURM_ARRAY_TASK_ID={id} is not a whole number")))?;
        let min = num("SLURM_ARRAY_TASK_MIN", Some(0))?;
        let step = num("SLURM_ARRAY_TASK_STEP", Some(1))?.max(1);
        let count = num("SLURM_ARRAY_TASK_COUNT", None)?;
        if id < min || !(id - min).is_multiple_of(step) || (id - min) / step >= count || count == 0 {
            return Err(StudyError::Shard(format!(
                "array task {id} is not one of {count} tasks from {min} in steps of {step}"
            )));
        }
        Ok(Some(Self { index: (id - min) / step, count }))
    }

    /// Whether case `k` (0-based, study order) is in this shard.
    pub fn holds(&self, k: usize) -> bool {
        k % self.count == self.index
    }
}

impl std::fmt::Display for Shard {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.index + 1, self.count)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_and_refuses() {
        assert_eq!(Shard::parse("2/3").unwrap(), Shard { index: 1, count: 3 });
        for bad in ["0/3", "4/3", "1/0", "a/2", "3", ""] {
            assert!(Shard::parse(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn slurm_variables() {
        let env = |pairs: &'static [(&'static str, &'static str)]| {
            move |k: &str| pairs.iter().find(|(n, _)| *n == k).map(|(_, v)| v.to_string())
        };
        assert_eq!(Shard::from_scheduler(env(&[])).unwrap(), None);
        let s = Shard::from_scheduler(env(&[
            ("SLURM_ARRAY_TASK_ID", "3"),
            ("SLURM_ARRAY_TASK_MIN", "1"),
            ("SLURM_ARRAY_TASK_COUNT", "3"),
        ]))
        .unwrap();
        assert_eq!(s, Some(Shard { index: 2, count: 3 }));
        let s = Shard::from_scheduler(env(&[
            ("SLURM_ARRAY_TASK_ID", "4"),
            ("SLURM_ARRAY_TASK_MIN", "0"),
            ("SLURM_ARRAY_TASK_STEP", "2"),
            ("SLURM_ARRAY_TASK_COUNT", "3"),
        ]))
        .unwrap();
        assert_eq!(s, Some(Shard { index: 2, count: 3 }));
        assert!(Shard::from_scheduler(env(&[("SLURM_ARRAY_TASK_ID", "5"), ("SLURM_ARRAY_TASK_COUNT", "3")]))
            .is_err());
        assert!(Shard::from_scheduler(env(&[("SLURM_ARRAY_TASK_ID", "1")])).is_err());
    }

    #[test]
    fn shards_cover_every_case_once() {
        let n = 3;
        for k in 0..10 {
            let owners = (0..n).filter(|&i| Shard { index: i, count: n }.holds(k)).count();
            assert_eq!(owners, 1);
        }
    }
}
