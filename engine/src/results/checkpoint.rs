//! The checkpoint of a run (`OUT.checkpoint`, layout in
//! `docs/results-format.md`): everything `glaze run --resume` needs to
//! continue exactly as the run would have gone on, in exact f64 bits.
//!
//! A small versioned binary file, little-endian: the magic `GLAZECKP`, the
//! format version, the program version, an FNV-1a hash of the input text,
//! the body, and an FNV-1a hash of all bytes before it (a torn or edited
//! file is refused). Written atomically: `OUT.checkpoint.tmp`, fsync,
//! rename, fsync of the folder.

use super::history::Record;
use crate::error::GlazeError;
use glaze_solvers::{FactorStats, IntegrationStats, IntegratorState};
use std::io::Write;
use std::path::{Path, PathBuf};

/// First bytes of a checkpoint file.
pub const MAGIC: &[u8; 8] = b"GLAZECKP";
/// Version of the checkpoint layout.
pub const CHECKPOINT_VERSION: u32 = 1;

/// Energy bookkeeping of a run between steps.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct EnergyState {
    /// Strain energy stored at t = 0, J.
    pub initial_strain: Option<f64>,
    /// Rayleigh dissipation since t = 0, J.
    pub dissipated: f64,
    /// Work of the wind loads since t = 0, J.
    pub aero_work: f64,
    /// Internal and aerodynamic force at the last step, N and N·m (per equation).
    pub f_int: Vec<f64>,
    /// Aerodynamic force at the last step.
    pub f_aero: Vec<f64>,
    /// Velocity at the last step, m/s and rad/s.
    pub v: Vec<f64>,
    /// Time of the last step, s.
    pub time: f64,
    /// Largest relative energy-balance error so far (dimensionless).
    pub worst: f64,
    /// Energy total of the first record, J.
    pub initial_total: Option<f64>,
    /// Node positions the gravity potential is measured from, m.
    pub origin: Vec<[f64; 3]>,
}

/// Everything a resumed run restores.
#[derive(Debug, Clone, PartialEq)]
pub struct Checkpoint {
    /// FNV-1a hash of the input text.
    pub input_hash: u64,
    /// Fingerprint of the dynamic system (sizes, mass and damping bits),
    /// checked against the one the resumed run builds.
    pub system_fingerprint: u64,
    /// Records on the results file (a multiple of the history block).
    pub records_written: usize,
    /// Time of the last of those records, s (checked against the file).
    pub last_written_time: Option<f64>,
    /// Records of the unfinished block, not yet in the file.
    pub buffered: Vec<Record>,
    /// Index of the next output record to compute.
    pub next_output: usize,
    /// Wall time of the run up to the checkpoint, s.
    pub wall_time_s: f64,
    /// Committed node positions, m.
    pub positions: Vec<[f64; 3]>,
    /// Committed node rotations (matrices, column-major).
    pub rotations: Vec<[f64; 9]>,
    /// The integrator's state.
    pub integrator: IntegratorState,
    /// The energy bookkeeping.
    pub energy: EnergyState,
}

/// The checkpoint file of results file `target`: `TARGET.checkpoint`.
pub fn checkpoint_path(target: &Path) -> PathBuf {
    let mut name = target.file_name().map(|n| n.to_os_string()).unwrap_or_default();
    name.push(".checkpoint");
    target.with_file_name(name)
}

/// FNV-1a, 64 bit (Fowler, Noll and Vo): a fingerprint, not a security hash.
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

struct Out(Vec<u8>);

impl Out {
    fn u64(&mut self, v: u64) {
        self.0.extend_from_slice(&v.to_le_bytes());
    }
    fn usize(&mut self, v: usize) {
        self.u64(v as u64);
    }
    fn f64(&mut self, v: f64) {
        self.u64(v.to_bits());
    }
    fn opt(&mut self, v: Option<f64>) {
        self.u64(u64::from(v.is_some()));
        self.f64(v.unwrap_or(0.0));
    }
    fn vec(&mut self, v: &[f64]) {
        self.usize(v.len());
        v.iter().for_each(|&x| self.f64(x));
    }
    fn arrays<const N: usize>(&mut self, v: &[[f64; N]]) {
        self.usize(v.len());
        v.iter().flatten().for_each(|&x| self.f64(x));
    }
    fn bytes(&mut self, b: &[u8]) {
        self.usize(b.len());
        self.0.extend_from_slice(b);
    }
}

struct In<'a> {
    bytes: &'a [u8],
    at: usize,
}

/// A checkpoint that does not read back.
#[derive(Debug)]
struct Torn;

impl In<'_> {
    fn take(&mut self, n: usize) -> Result<&[u8], Torn> {
        let end = self.at.checked_add(n).filter(|&e| e <= self.bytes.len()).ok_or(Torn)?;
        let s = &self.bytes[self.at..end];
        self.at = end;
        Ok(s)
    }
    fn u64(&mut self) -> Result<u64, Torn> {
        let b = self.take(8)?;
        Ok(u64::from_le_bytes(b.try_into().map_err(|_| Torn)?))
    }
    fn usize(&mut self) -> Result<usize, Torn> {
        usize::try_from(self.u64()?).map_err(|_| Torn)
    }
    /// A length of items of `item` bytes each that the rest of the file can hold.
    fn len(&mut self, item: usize) -> Result<usize, Torn> {
        let n = self.usize()?;
        if n.checked_mul(item).is_none_or(|b| b > self.bytes.len() - self.at) {
            return Err(Torn);
        }
        Ok(n)
    }
    fn f64(&mut self) -> Result<f64, Torn> {
        self.u64().map(f64::from_bits)
    }
    fn opt(&mut self) -> Result<Option<f64>, Torn> {
        let flag = self.u64()?;
        let v = self.f64()?;
        Ok((flag == 1).then_some(v))
    }
    fn vec(&mut self) -> Result<Vec<f64>, Torn> {
        let n = self.len(8)?;
        (0..n).map(|_| self.f64()).collect()
    }
    fn arrays<const N: usize>(&mut self) -> Result<Vec<[f64; N]>, Torn> {
        let n = self.len(8 * N)?;
        (0..n)
            .map(|_| {
                let mut a = [0.0; N];
                for x in &mut a {
                    *x = self.f64()?;
                }
                Ok(a)
            })
            .collect()
    }
    fn bytes(&mut self) -> Result<Vec<u8>, Torn> {
        let n = self.len(1)?;
        self.take(n).map(<[u8]>::to_vec)
    }
}

fn put_record(o: &mut Out, r: &Record) {
    o.f64(r.time);
    o.arrays(&r.displacement);
    o.arrays(&r.rotation);
    o.arrays(&r.velocity);
    o.vec(&r.axial_force);
    o.arrays(&r.support_force);
    o.arrays(std::slice::from_ref(&r.energy));
}

fn get_record(i: &mut In<'_>) -> Result<Record, Torn> {
    Ok(Record {
        time: i.f64()?,
        displacement: i.arrays()?,
        rotation: i.arrays()?,
        velocity: i.arrays()?,
        axial_force: i.vec()?,
        support_force: i.arrays()?,
        energy: *i.arrays::<5>()?.first().ok_or(Torn)?,
    })
}

const STAT_FIELDS: usize = 13;

fn stats_to(s: &IntegrationStats) -> [usize; STAT_FIELDS] {
    let f = &s.factor_stats;
    [
        s.steps,
        s.rejected_steps,
        s.newton_iterations,
        s.evaluations,
        s.factorisations,
        s.solves,
        f.symbolic,
        f.symbolic_cholesky,
        f.symbolic_lu,
        f.numeric_cholesky,
        f.numeric_lu,
        f.solves,
        f.cholesky_failures,
    ]
}

fn stats_from(v: [usize; STAT_FIELDS]) -> IntegrationStats {
    IntegrationStats {
        steps: v[0],
        rejected_steps: v[1],
        newton_iterations: v[2],
        evaluations: v[3],
        factorisations: v[4],
        solves: v[5],
        factor_stats: FactorStats {
            symbolic: v[6],
            symbolic_cholesky: v[7],
            symbolic_lu: v[8],
            numeric_cholesky: v[9],
            numeric_lu: v[10],
            solves: v[11],
            cholesky_failures: v[12],
        },
    }
}

impl Checkpoint {
    /// The file's bytes.
    pub fn to_bytes(&self) -> Vec<u8> {
        let mut o = Out(Vec::new());
        o.0.extend_from_slice(MAGIC);
        o.0.extend_from_slice(&CHECKPOINT_VERSION.to_le_bytes());
        o.bytes(env!("CARGO_PKG_VERSION").as_bytes());
        o.u64(self.input_hash);
        o.u64(self.system_fingerprint);
        o.usize(self.records_written);
        o.opt(self.last_written_time);
        o.usize(self.buffered.len());
        self.buffered.iter().for_each(|r| put_record(&mut o, r));
        o.usize(self.next_output);
        o.f64(self.wall_time_s);
        o.arrays(&self.positions);
        o.arrays(&self.rotations);
        let s = &self.integrator;
        o.f64(s.t);
        o.f64(s.dt);
        o.usize(s.easy);
        for v in [&s.v, &s.a, &s.g, &s.ma, &s.cv] {
            o.vec(v);
        }
        o.opt(s.factor.as_ref().map(|(h, _)| *h));
        o.vec(s.factor.as_ref().map_or(&[][..], |(_, v)| v.as_slice()));
        stats_to(&s.stats).iter().for_each(|&x| o.usize(x));
        let e = &self.energy;
        o.opt(e.initial_strain);
        o.f64(e.dissipated);
        o.f64(e.aero_work);
        o.vec(&e.f_int);
        o.vec(&e.f_aero);
        o.vec(&e.v);
        o.f64(e.time);
        o.f64(e.worst);
        o.opt(e.initial_total);
        o.arrays(&e.origin);
        let hash = fnv1a64(&o.0);
        o.u64(hash);
        o.0
    }

    /// Reads a checkpoint of the input `input_text` from `bytes`.
    ///
    /// # Errors
    /// [`GlazeError::Resume`] (naming `path`) for a file that is not a
    /// checkpoint, of another layout version or program version, torn, or
    /// written for another input.
    pub fn from_bytes(bytes: &[u8], path: &Path, input_text: &str) -> Result<Self, GlazeError> {
        let refuse = |message: String| GlazeError::Resume { path: path.to_path_buf(), message };
        if bytes.len() < MAGIC.len() + 4 + 8 || &bytes[..MAGIC.len()] != MAGIC {
            return Err(refuse("not a glaze checkpoint file".into()));
        }
        let version = u32::from_le_bytes([bytes[8], bytes[9], bytes[10], bytes[11]]);
        if version != CHECKPOINT_VERSION {
            return Err(refuse(format!(
                "checkpoint layout version {version}, this glaze reads version {CHECKPOINT_VERSION}; run again without --resume"
            )));
        }
        let (body, tail) = bytes.split_at(bytes.len() - 8);
        let stored = u64::from_le_bytes(tail.try_into().unwrap_or([0; 8]));
        if fnv1a64(body) != stored {
            return Err(refuse(
                "the checkpoint is damaged (its check sum does not match); run again without --resume".into(),
            ));
        }
        let torn =
            |_: Torn| refuse("the checkpoint is damaged (it ends early); run again without --resume".into());
        let mut i = In { bytes: body, at: MAGIC.len() + 4 };
        let program = i.bytes().map_err(torn)?;
        if program != env!("CARGO_PKG_VERSION").as_bytes() {
            return Err(refuse(format!(
                "written by glaze {}, not this glaze {}; run again without --resume",
                String::from_utf8_lossy(&program),
                env!("CARGO_PKG_VERSION")
            )));
        }
        let input_hash = i.u64().map_err(torn)?;
        if input_hash != fnv1a64(input_text.as_bytes()) {
            return Err(refuse(
                "the checkpoint was written for another input (the input file changed since); run again without --resume"
                    .into(),
            ));
        }
        Self::body(&mut i, input_hash).map_err(torn)
    }

    fn body(i: &mut In<'_>, input_hash: u64) -> Result<Self, Torn> {
        let system_fingerprint = i.u64()?;
        let records_written = i.usize()?;
        let last_written_time = i.opt()?;
        let n = i.len(8)?;
        let buffered = (0..n).map(|_| get_record(i)).collect::<Result<_, _>>()?;
        let next_output = i.usize()?;
        let wall_time_s = i.f64()?;
        let positions = i.arrays()?;
        let rotations = i.arrays()?;
        let (t, dt, easy) = (i.f64()?, i.f64()?, i.usize()?);
        let (v, a, g, ma, cv) = (i.vec()?, i.vec()?, i.vec()?, i.vec()?, i.vec()?);
        let h = i.opt()?;
        let s_vals = i.vec()?;
        let mut stats = [0; STAT_FIELDS];
        for x in &mut stats {
            *x = i.usize()?;
        }
        let integrator = IntegratorState {
            t,
            dt,
            easy,
            v,
            a,
            g,
            ma,
            cv,
            factor: h.map(|h| (h, s_vals)),
            stats: stats_from(stats),
        };
        let energy = EnergyState {
            initial_strain: i.opt()?,
            dissipated: i.f64()?,
            aero_work: i.f64()?,
            f_int: i.vec()?,
            f_aero: i.vec()?,
            v: i.vec()?,
            time: i.f64()?,
            worst: i.f64()?,
            initial_total: i.opt()?,
            origin: i.arrays()?,
        };
        if i.at != i.bytes.len() {
            return Err(Torn);
        }
        Ok(Self {
            input_hash,
            system_fingerprint,
            records_written,
            last_written_time,
            buffered,
            next_output,
            wall_time_s,
            positions,
            rotations,
            integrator,
            energy,
        })
    }

    /// Writes the checkpoint of results file `target` atomically: to
    /// `TARGET.checkpoint.tmp`, fsync, rename, fsync of the folder.
    ///
    /// # Errors
    /// [`GlazeError::Results`] when the file cannot be written.
    pub fn write(&self, target: &Path) -> Result<(), GlazeError> {
        let path = checkpoint_path(target);
        let mut tmp = path.clone().into_os_string();
        tmp.push(".tmp");
        let tmp = PathBuf::from(tmp);
        let fail = |e: std::io::Error| GlazeError::Results {
            path: path.clone(),
            message: super::preflight::describe_write_error(format!("checkpoint: {e}")),
        };
        {
            let mut f = std::fs::File::create(&tmp).map_err(fail)?;
            f.write_all(&self.to_bytes()).map_err(fail)?;
            f.sync_all().map_err(fail)?;
        }
        std::fs::rename(&tmp, &path).map_err(fail)?;
        if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
            // The rename itself on disk; not every file system allows this.
            let _ = std::fs::File::open(dir).and_then(|d| d.sync_all());
        }
        Ok(())
    }

    /// Reads the checkpoint of results file `target` for the input `input_text`.
    ///
    /// # Errors
    /// [`GlazeError::Resume`] for a missing or unreadable file and as
    /// [`from_bytes`](Self::from_bytes).
    pub fn read(target: &Path, input_text: &str) -> Result<Self, GlazeError> {
        let path = checkpoint_path(target);
        let bytes = std::fs::read(&path).map_err(|e| GlazeError::Resume {
            path: path.clone(),
            message: if e.kind() == std::io::ErrorKind::NotFound {
                "no checkpoint: the run stopped before its first checkpoint, or checkpoints are off \
                 ([dynamics.checkpoint]); run again without --resume"
                    .into()
            } else {
                format!("cannot be read: {e}")
            },
        })?;
        Self::from_bytes(&bytes, &path, input_text)
    }

    /// Removes the checkpoint of `target` (and a leftover temporary file).
    pub fn remove(target: &Path) {
        let path = checkpoint_path(target);
        let _ = std::fs::remove_file(&path);
        let mut tmp = path.into_os_string();
        tmp.push(".tmp");
        let _ = std::fs::remove_file(tmp);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> Checkpoint {
        let record = Record {
            time: 0.25,
            displacement: vec![[1.0, -2.0, f64::MIN_POSITIVE]],
            rotation: vec![[1.0, 0.0, 0.0, 0.0]],
            velocity: vec![[0.1, 0.2, 0.3]],
            axial_force: vec![1.5e4, -0.0],
            support_force: vec![[1.0, 2.0, 3.0]],
            energy: [1.0, 2.0, 3.0, 4.0, 5.0],
        };
        Checkpoint {
            input_hash: fnv1a64(b"input"),
            system_fingerprint: 7,
            records_written: 64,
            last_written_time: Some(3.15),
            buffered: vec![record.clone(), record],
            next_output: 66,
            wall_time_s: 1.5,
            positions: vec![[0.1, 0.2, 0.30000000000000004]],
            rotations: vec![[1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 1.0]],
            integrator: IntegratorState {
                t: 3.3,
                dt: 0.01,
                easy: 2,
                v: vec![1.0 / 3.0; 6],
                a: vec![-1e-300; 6],
                g: vec![2.0; 6],
                ma: vec![3.0; 6],
                cv: vec![4.0; 6],
                factor: Some((0.01, vec![5.0; 20])),
                stats: IntegrationStats { steps: 330, ..Default::default() },
            },
            energy: EnergyState { initial_strain: Some(9.0), v: vec![1.0; 6], ..Default::default() },
        }
    }

    #[test]
    fn round_trip_keeps_every_bit_and_refuses_torn_or_foreign_files() {
        let c = sample();
        let bytes = c.to_bytes();
        let path = Path::new("r.h5.checkpoint");
        assert_eq!(Checkpoint::from_bytes(&bytes, path, "input").unwrap(), c);
        let message = |b: &[u8], input: &str| match Checkpoint::from_bytes(b, path, input) {
            Err(GlazeError::Resume { message, .. }) => message,
            other => panic!("not refused: {other:?}"),
        };
        assert!(message(&bytes, "other input").contains("another input"));
        assert!(message(&bytes[..bytes.len() - 1], "input").contains("damaged"));
        let mut flipped = bytes.clone();
        flipped[40] ^= 1;
        assert!(message(&flipped, "input").contains("damaged"));
        assert!(message(b"not a checkpoint at all", "input").contains("not a glaze checkpoint"));
        // Every truncation is refused without a panic.
        for n in 0..bytes.len() {
            assert!(Checkpoint::from_bytes(&bytes[..n], path, "input").is_err());
        }
    }

    #[test]
    fn written_atomically_and_read_back() {
        let dir = std::env::temp_dir().join(format!("glaze_checkpoint_test_{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let target = dir.join("r.h5");
        let c = sample();
        c.write(&target).unwrap();
        assert!(checkpoint_path(&target).is_file());
        assert!(!dir.join("r.h5.checkpoint.tmp").exists());
        assert_eq!(Checkpoint::read(&target, "input").unwrap(), c);
        Checkpoint::remove(&target);
        match Checkpoint::read(&target, "input") {
            Err(GlazeError::Resume { message, .. }) => {
                assert!(message.contains("no checkpoint"), "{message}")
            }
            other => panic!("{other:?}"),
        }
        let _ = std::fs::remove_dir_all(&dir);
    }
}
