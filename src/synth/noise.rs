//! Deterministic pseudo-random numbers for the synthetic trials: xorshift64* (Vigna 2016, "An
//! experimental exploration of Marsaglia's xorshift generators, scrambled", ACM TOMS 42(4)),
//! seeded through splitmix64, with Gaussian deviates by the Box-Muller transform (Box & Muller
//! 1958, Ann Math Stat 29:610-611). Also marker noise and gaps applied to marker tracks.

use std::f64::consts::TAU;

/// Stream of the marker noise.
pub(crate) const STREAM_NOISE: u64 = 1;
/// Stream of the gaps.
pub(crate) const STREAM_GAPS: u64 = 2;
/// Stream of the standing sway phases.
pub(crate) const STREAM_SWAY: u64 = 3;

/// xorshift64* generator with a cached second Box-Muller deviate.
#[derive(Clone, Debug)]
pub(crate) struct Rng {
    state: u64,
    spare: Option<f64>,
}

fn splitmix64(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

impl Rng {
    /// A generator for `seed`; `stream` separates independent uses of one seed.
    pub fn new(seed: u64, stream: u64) -> Rng {
        let s = splitmix64(seed ^ splitmix64(stream));
        Rng {
            state: if s == 0 { 0x2545_F491_4F6C_DD1D } else { s },
            spare: None,
        }
    }

    pub fn next_u64(&mut self) -> u64 {
        let mut x = self.state;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.state = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    /// Uniform in [0, 1), 53 random bits.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform integer in [0, n) (0 when n is 0).
    pub fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            return 0;
        }
        ((self.uniform() * n as f64) as usize).min(n - 1)
    }

    /// Standard normal deviate (Box-Muller).
    pub fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare.take() {
            return z;
        }
        let u1 = 1.0 - self.uniform(); // in (0, 1]
        let u2 = self.uniform();
        let r = (-2.0 * u1.ln()).sqrt();
        let (s, c) = (TAU * u2).sin_cos();
        self.spare = Some(r * s);
        r * c
    }
}

/// Adds independent Gaussian noise of standard deviation `sigma_m` to every coordinate.
pub(crate) fn add_noise(tracks: &mut [Vec<Option<[f64; 3]>>], sigma_m: f64, rng: &mut Rng) {
    if sigma_m <= 0.0 {
        return;
    }
    for track in tracks.iter_mut() {
        for p in track.iter_mut().flatten() {
            for c in p.iter_mut() {
                *c += sigma_m * rng.normal();
            }
        }
    }
}

/// Frames kept free of gaps at each end of a trial.
const GAP_MARGIN_FRAMES: usize = 10;

/// Cuts `n_gaps` interior gaps of 3 to 8 frames into randomly chosen tracks; none within
/// [`GAP_MARGIN_FRAMES`] of either end, and none touching another gap of the same track. Returns
/// the gaps as (track, first frame, length).
pub(crate) fn cut_gaps(
    tracks: &mut [Vec<Option<[f64; 3]>>],
    n_gaps: usize,
    rng: &mut Rng,
) -> Vec<(usize, usize, usize)> {
    let mut cut = Vec::new();
    let n_tracks = tracks.len();
    let n_frames = tracks.first().map_or(0, |t| t.len());
    if n_tracks == 0 || n_frames < 2 * GAP_MARGIN_FRAMES + 8 {
        return cut;
    }
    for _ in 0..n_gaps {
        for _attempt in 0..20 {
            let m = rng.below(n_tracks);
            let len = 3 + rng.below(6);
            let start = GAP_MARGIN_FRAMES + rng.below(n_frames - 2 * GAP_MARGIN_FRAMES - len + 1);
            let Some(track) = tracks.get_mut(m) else {
                break;
            };
            let lo = start.saturating_sub(3);
            let hi = (start + len + 3).min(n_frames);
            if track[lo..hi].iter().any(|p| p.is_none()) {
                continue;
            }
            for p in &mut track[start..start + len] {
                *p = None;
            }
            cut.push((m, start, len));
            break;
        }
    }
    cut
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_seed_same_numbers_other_seed_other_numbers() {
        let a: Vec<u64> = {
            let mut r = Rng::new(7, 1);
            (0..5).map(|_| r.next_u64()).collect()
        };
        let b: Vec<u64> = {
            let mut r = Rng::new(7, 1);
            (0..5).map(|_| r.next_u64()).collect()
        };
        let c: Vec<u64> = {
            let mut r = Rng::new(8, 1);
            (0..5).map(|_| r.next_u64()).collect()
        };
        assert_eq!(a, b);
        assert_ne!(a, c);
    }

    /// Sample mean and variance of 200 000 deviates are those of N(0, 1): standard errors are
    /// 0.0022 (mean) and 0.0032 (variance), so 0.01 is more than 3 of them.
    #[test]
    fn box_muller_gives_standard_normal_moments() {
        let mut r = Rng::new(42, 0);
        let n = 200_000;
        let xs: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let mean = xs.iter().sum::<f64>() / n as f64;
        let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        assert!(mean.abs() < 0.01, "mean {mean}");
        assert!((var - 1.0).abs() < 0.015, "variance {var}");
    }

    #[test]
    fn gaps_are_interior_short_and_separate() {
        let mut tracks = vec![vec![Some([0.0; 3]); 300]; 5];
        let mut r = Rng::new(3, 2);
        let cut = cut_gaps(&mut tracks, 12, &mut r);
        assert!(!cut.is_empty());
        for (m, start, len) in &cut {
            assert!((3..=8).contains(len));
            assert!(*start >= GAP_MARGIN_FRAMES && start + len <= 300 - GAP_MARGIN_FRAMES);
            assert!(tracks[*m][*start..start + len].iter().all(|p| p.is_none()));
            assert!(tracks[*m][start - 1].is_some() && tracks[*m][start + len].is_some());
        }
        let missing: usize = tracks.iter().flatten().filter(|p| p.is_none()).count();
        assert_eq!(missing, cut.iter().map(|c| c.2).sum::<usize>());
    }
}
