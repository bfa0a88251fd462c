//! Plot-ready traces of one analysis (x = log10 f): the workbench's plots
//! and the SVG figures draw the same points.

use crate::engine::analysis::{cmrr_db, Analysis, Point};
use crate::judge::figures::CMRR_CEILING_DB;

/// Keep only finite points.
pub fn finite(points: impl Iterator<Item = (f64, f64)>) -> Vec<(f64, f64)> {
    points
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .collect()
}

/// The closed-loop phase along the sweep, unwrapped from the DC point (the
/// nearest branch to the previous point), so it never jumps by 360°.
fn unwrapped_gain_phase(pts: &[Point]) -> Vec<(f64, f64)> {
    let mut prev = 0.0;
    let mut out = Vec::with_capacity(pts.len());
    for p in pts {
        let ph = crate::num::refine::unwrap_near(p.gain, prev);
        if ph.is_finite() {
            prev = ph;
        }
        out.push((p.f_hz.log10(), ph));
    }
    out
}

/// Plot-ready traces (x = log10 f), built once per analysis.
#[derive(Debug, Clone, Default)]
pub struct Traces {
    pub gain_db: Vec<(f64, f64)>,
    pub gain_phase: Vec<(f64, f64)>,
    pub loop_db: Vec<(f64, f64)>,
    pub loop_phase: Vec<(f64, f64)>,
    /// The amplifier's open-loop gain |A| and the noise gain |1/β| =
    /// |A/T|, in dB: where they meet, the loop gain is 0 dB.
    pub open_loop_db: Vec<(f64, f64)>,
    pub noise_gain_db: Vec<(f64, f64)>,
    /// log10 |Z| in ohms: Zout at the load terminal (riso included, load
    /// removed), Zout_pin at the amplifier pin (riso and load removed), Zin.
    pub zout: Vec<(f64, f64)>,
    pub zout_pin: Vec<(f64, f64)>,
    pub zin: Vec<(f64, f64)>,
    /// log10 of the density in V/√Hz.
    pub noise: Vec<(f64, f64)>,
    /// The output envelope at the internal output, log10 of volts peak:
    /// the signal's need and its swing, slew and current ceilings.
    pub env_need: Vec<(f64, f64)>,
    pub env_swing: Vec<(f64, f64)>,
    pub env_slew: Vec<(f64, f64)>,
    pub env_current: Vec<(f64, f64)>,
    /// Two inputs: the CMRR in dB, drawn at most at the ceiling
    /// (`CMRR_CEILING_DB`; an unbounded point sits on it).
    pub cmrr_db: Vec<(f64, f64)>,
    /// Whether some CMRR point was drawn at the ceiling.
    pub cmrr_clamped: bool,
}

impl Traces {
    pub fn new(a: &Analysis) -> Traces {
        let pts = &a.sweep.points;
        let lf = |p: &Point| p.f_hz.log10();
        let db =
            |pick: fn(&Point) -> f64| finite(pts.iter().map(|p| (lf(p), 20.0 * pick(p).log10())));
        Traces {
            gain_db: db(|p| p.gain.norm()),
            gain_phase: finite(unwrapped_gain_phase(pts).into_iter()),
            loop_db: db(|p| p.loop_gain.norm()),
            open_loop_db: db(|p| p.open_loop.norm()),
            noise_gain_db: db(|p| p.noise_gain().norm()),
            loop_phase: finite(
                pts.iter()
                    .zip(&a.sweep.loop_phase_deg)
                    .map(|(p, ph)| (lf(p), *ph)),
            ),
            zout: finite(pts.iter().map(|p| (lf(p), p.zout.norm().log10()))),
            zout_pin: finite(pts.iter().map(|p| (lf(p), p.zout_pin.norm().log10()))),
            zin: finite(
                pts.iter()
                    .filter_map(|p| p.zin.map(|z| (lf(p), z.norm().log10()))),
            ),
            noise: finite(pts.iter().map(|p| (lf(p), p.noise_density().log10()))),
            cmrr_db: finite(pts.iter().filter_map(|p| {
                p.cm_gain
                    .map(|cm| (lf(p), cmrr_db(p.gain, cm).min(CMRR_CEILING_DB)))
            })),
            cmrr_clamped: pts.iter().any(|p| {
                p.cm_gain
                    .is_some_and(|cm| cmrr_db(p.gain, cm) >= CMRR_CEILING_DB)
            }),
            ..Traces::envelope(a)
        }
    }

    /// The envelope traces (empty without source.peak).
    fn envelope(a: &Analysis) -> Traces {
        let l = &a.limits;
        let env = &l.envelope;
        let lf = |f: f64| f.log10();
        let ceiling = |pick: fn(&crate::engine::limits::EnvelopePoint) -> Option<f64>| {
            finite(
                env.iter()
                    .filter_map(|e| pick(e).map(|v| (lf(e.f_hz), v.log10()))),
            )
        };
        let swing = match (l.swing_ceiling_v, env.first(), env.last()) {
            (Some(v), Some(a), Some(b)) => {
                finite([(lf(a.f_hz), v.log10()), (lf(b.f_hz), v.log10())].into_iter())
            }
            _ => Vec::new(),
        };
        Traces {
            env_need: finite(env.iter().map(|e| (lf(e.f_hz), e.need.log10()))),
            env_swing: swing,
            env_slew: ceiling(|e| e.slew_ceiling),
            env_current: ceiling(|e| e.current_ceiling),
            ..Traces::default()
        }
    }
}
