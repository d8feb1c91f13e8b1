//! Dominant frequencies of a uniformly sampled signal.
//!
//! Method: remove the mean, apply a periodic Hann window
//! `w_k = ½ (1 − cos 2πk/n)` (coherent gain `Σw/n = 0.5` exactly, highest
//! sidelobe −31.5 dB; Harris 1978, "On the use of windows for harmonic
//! analysis with the discrete Fourier transform", *Proc. IEEE* 66(1), from
//! memory), zero-pad to the power of two `N ≥ 4n`, take the FFT (rustfft),
//! find the local maxima of the one-sided magnitude and refine each by a
//! parabola through the logarithms of the three bins around it (the
//! quadratic/Gaussian interpolation of Smith & Serra 1987, "PARSHL", Proc.
//! ICMC, and Jacobsen & Kootsookos 2007, "Fast, accurate frequency
//! estimators", *IEEE Signal Process. Mag.* 24(3); from memory). The
//! amplitude is `2 |X| / Σw`, so a pure sine of amplitude `A` returns `≈ A`.
//! Leakage from the negative-frequency image is ignored (a line within a few
//! bins of 0 Hz or of Nyquist is less accurate).

use rustfft::{num_complex::Complex, FftPlanner};

/// One spectral line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Peak {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Amplitude of the sinusoid, in the signal's unit.
    pub amplitude: f64,
}

/// Which peaks [`dominant_frequencies`] returns.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpectrumOptions {
    /// Largest number of peaks returned.
    pub max_peaks: usize,
    /// Peaks below this fraction of the largest one are dropped. The default
    /// 0.03 drops the Hann sidelobes (≤ −31.5 dB ≈ 0.027) of the strongest line.
    pub min_relative_amplitude: f64,
}

impl Default for SpectrumOptions {
    fn default() -> Self {
        Self { max_peaks: 8, min_relative_amplitude: 0.03 }
    }
}

/// Errors of the spectrum estimate.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SpectrumError {
    /// Fewer than 4 samples.
    #[error("need at least 4 samples, got {0}")]
    TooFewSamples(usize),
    /// Too many samples for the zero-padded length to fit in memory indices.
    #[error("signal of {0} samples is too long")]
    TooLong(usize),
    /// The sample rate is not finite and positive.
    #[error("sample rate {0} Hz must be finite and positive")]
    BadSampleRate(f64),
    /// A sample is NaN or infinite.
    #[error("sample {0} is not finite")]
    NonFinite(usize),
    /// `min_relative_amplitude` is NaN or negative.
    #[error("min_relative_amplitude must be a non-negative number")]
    BadOptions,
    /// No spectral peak (e.g. a constant signal).
    #[error("the signal has no spectral peak")]
    NoPeak,
}

/// Spectral peaks of `signal` sampled at `sample_rate_hz` (Hz), largest
/// amplitude first. Needs at least 4 finite samples. A constant signal gives
/// an empty list.
pub fn dominant_frequencies(
    signal: &[f64],
    sample_rate_hz: f64,
    options: &SpectrumOptions,
) -> Result<Vec<Peak>, SpectrumError> {
    let n = signal.len();
    if n < 4 {
        return Err(SpectrumError::TooFewSamples(n));
    }
    if !(sample_rate_hz.is_finite() && sample_rate_hz > 0.0) {
        return Err(SpectrumError::BadSampleRate(sample_rate_hz));
    }
    if let Some(i) = signal.iter().position(|x| !x.is_finite()) {
        return Err(SpectrumError::NonFinite(i));
    }
    if options.min_relative_amplitude.is_nan() || options.min_relative_amplitude < 0.0 {
        return Err(SpectrumError::BadOptions);
    }
    let big_n =
        n.checked_mul(4).and_then(usize::checked_next_power_of_two).ok_or(SpectrumError::TooLong(n))?;

    let mean = signal.iter().sum::<f64>() / n as f64;
    let mut buffer = vec![Complex::new(0.0, 0.0); big_n];
    let mut window_sum = 0.0;
    for (k, (b, &x)) in buffer.iter_mut().zip(signal).enumerate() {
        let w = 0.5 * (1.0 - (2.0 * std::f64::consts::PI * k as f64 / n as f64).cos());
        window_sum += w;
        *b = Complex::new(w * (x - mean), 0.0);
    }
    FftPlanner::new().plan_fft_forward(big_n).process(&mut buffer);
    let half = big_n / 2;
    let mag: Vec<f64> = buffer[..=half].iter().map(|c| c.norm()).collect();

    let scale = 2.0 / window_sum;
    let df = sample_rate_hz / big_n as f64;
    let mut peaks: Vec<Peak> = Vec::new();
    for k in 1..half {
        let (a, b, c) = (mag[k - 1], mag[k], mag[k + 1]);
        if !(b > a && b >= c) {
            continue;
        }
        let (mut offset, mut peak) = (0.0, b);
        if a > 0.0 && c > 0.0 {
            let (la, lb, lc) = (a.ln(), b.ln(), c.ln());
            let curvature = la - 2.0 * lb + lc;
            if curvature < 0.0 {
                offset = (0.5 * (la - lc) / curvature).clamp(-0.5, 0.5);
                peak = (lb - 0.25 * (la - lc) * offset).exp();
            }
        }
        peaks.push(Peak { frequency_hz: (k as f64 + offset) * df, amplitude: peak * scale });
    }
    peaks.sort_by(|p, q| q.amplitude.total_cmp(&p.amplitude));
    let largest = peaks.first().map_or(0.0, |p| p.amplitude);
    // Rounding noise of a constant signal is no peak.
    let floor = options.min_relative_amplitude * largest;
    let noise = 1e-12 * signal.iter().map(|x| x.abs()).fold(0.0, f64::max);
    peaks.retain(|p| p.amplitude >= floor && p.amplitude > noise);
    peaks.truncate(options.max_peaks);
    Ok(peaks)
}

/// The largest spectral peak of `signal` sampled at `sample_rate_hz` (Hz),
/// with the default options; [`SpectrumError::NoPeak`] if there is none.
pub fn dominant_frequency(signal: &[f64], sample_rate_hz: f64) -> Result<Peak, SpectrumError> {
    dominant_frequencies(signal, sample_rate_hz, &SpectrumOptions::default())?
        .first()
        .copied()
        .ok_or(SpectrumError::NoPeak)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn sampled(n: usize, fs: f64, mut f: impl FnMut(f64) -> f64) -> Vec<f64> {
        (0..n).map(|k| f(k as f64 / fs)).collect()
    }

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    #[test]
    fn two_sines_recovered() {
        // constructed: 1.5 sin(2π 0.83 t + 0.3) + 0.6 cos(2π 2.37 t) + 0.4,
        // 100 s at 20 Hz.
        let x = sampled(2000, 20.0, |t| {
            1.5 * (2.0 * PI * 0.83 * t + 0.3).sin() + 0.6 * (2.0 * PI * 2.37 * t).cos() + 0.4
        });
        let peaks = dominant_frequencies(&x, 20.0, &SpectrumOptions::default()).unwrap();
        assert_eq!(peaks.len(), 2, "{peaks:?}");
        assert!(rel(peaks[0].frequency_hz, 0.83) < 0.01);
        assert!(rel(peaks[0].amplitude, 1.5) < 0.03);
        assert!(rel(peaks[1].frequency_hz, 2.37) < 0.01);
        assert!(rel(peaks[1].amplitude, 0.6) < 0.03);
    }

    #[test]
    fn frequency_between_bins() {
        // constructed: 1.2345 Hz over 100 s is 123.45 DFT bins (0.45 bin off),
        // amplitude 0.8, sampled at 10 Hz.
        let x = sampled(1000, 10.0, |t| 0.8 * (2.0 * PI * 1.2345 * t + 1.1).sin());
        let p = dominant_frequency(&x, 10.0).unwrap();
        // well inside 1 %: within 2 % of one DFT bin (0.01 Hz)
        assert!((p.frequency_hz - 1.2345).abs() < 2e-4, "{p:?}");
        assert!(rel(p.amplitude, 0.8) < 0.01, "{p:?}");
        // a single line: the sidelobes are below the default threshold
        let all = dominant_frequencies(&x, 10.0, &SpectrumOptions::default()).unwrap();
        assert_eq!(all.len(), 1, "{all:?}");
        // with no threshold the sidelobes show as peaks, all far below
        let opts = SpectrumOptions { max_peaks: 50, min_relative_amplitude: 0.0 };
        let all = dominant_frequencies(&x, 10.0, &opts).unwrap();
        assert!(all.len() > 1 && all[1].amplitude < 0.03 * all[0].amplitude);
    }

    #[test]
    fn sine_in_noise() {
        // constructed: 0.5 sin(2π 0.31 t) plus uniform noise of ±0.25 (fixed LCG),
        // 200 s at 8 Hz.
        let mut state: u64 = 0x5EC7_0004;
        let x = sampled(1600, 8.0, |t| {
            state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            let u = (state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0;
            0.5 * (2.0 * PI * 0.31 * t).sin() + 0.25 * u
        });
        let p = dominant_frequency(&x, 8.0).unwrap();
        assert!(rel(p.frequency_hz, 0.31) < 0.01, "{p:?}");
        assert!(rel(p.amplitude, 0.5) < 0.05, "{p:?}");
    }

    #[test]
    fn bad_input() {
        assert_eq!(dominant_frequency(&[1.0, 2.0, 3.0], 1.0), Err(SpectrumError::TooFewSamples(3)));
        assert_eq!(dominant_frequency(&[1.0; 8], 0.0), Err(SpectrumError::BadSampleRate(0.0)));
        assert_eq!(dominant_frequency(&[1.0, f64::NAN, 0.0, 1.0], 1.0), Err(SpectrumError::NonFinite(1)));
        let opts = SpectrumOptions { max_peaks: 3, min_relative_amplitude: f64::NAN };
        assert_eq!(dominant_frequencies(&[0.0, 1.0, 0.0, -1.0], 1.0, &opts), Err(SpectrumError::BadOptions));
        // constant signal: no peak
        assert_eq!(dominant_frequency(&[3.7; 64], 1.0), Err(SpectrumError::NoPeak));
        assert!(dominant_frequencies(&[3.7; 64], 1.0, &SpectrumOptions::default()).unwrap().is_empty());
    }
}
