//! Frequency-domain built-ins: `frequency_response`, `loop_margins`, `bandwidth`,
//! `h2_norm`, `hinf_norm`. The numerics are `crate::numeric::freq`.

use crate::numeric::freq::{curves, grid, margins, norms, response};
use crate::script::convert::{float_array, to_f64_vec, type_name, Rr};
use crate::script::declare::{Call, Model, Param};
use crate::script::types::{Complex, ComplexMatrix, Vector};
use nalgebra::DMatrix;
use rhai::{Dynamic, Map, FLOAT, INT};

/// Most frequencies accepted in one call.
const MAX_FREQUENCIES: usize = 1_000_000;

/// Points of the automatic grid of `frequency_response(sys)` (before resonance clusters).
const AUTO_POINTS: usize = 200;

fn response_value(g: DMatrix<nalgebra::Complex<f64>>, siso: bool) -> Dynamic {
    if siso {
        Dynamic::from(Complex(g[(0, 0)]))
    } else {
        Dynamic::from(ComplexMatrix(g))
    }
}

/// Angular frequencies in rad/s: one number (then `scalar`) or an array of them.
struct Frequencies {
    w: Vec<f64>,
    scalar: bool,
}

impl Param for Frequencies {
    const KIND: &'static str = "rad/s | [rad/s]";
    fn from_arg(w: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        if w.is::<FLOAT>() || w.is::<INT>() {
            let w = vec![call.number(&w, arg)?];
            return Ok(Frequencies { w, scalar: true });
        }
        if !crate::script::convert::is_list(&w) {
            return Err(call.fail(format_args!(
                "{arg} must be a frequency in rad/s or a list of them, found {}",
                type_name(&w)
            )));
        }
        let w = to_f64_vec(&w, call.name, arg)?;
        if w.len() > MAX_FREQUENCIES {
            return Err(call.fail(format_args!(
                "at most {MAX_FREQUENCIES} frequencies in one call, found {}",
                w.len()
            )));
        }
        Ok(Frequencies { w, scalar: false })
    }
}

/// A crossover frequency for the script: `()` when there is none (NaN in the numerics).
fn crossover(w: f64) -> Dynamic {
    if w.is_nan() {
        Dynamic::UNIT
    } else {
        Dynamic::from_float(w)
    }
}

/// The `loop_margins` map of a [`margins::Margins`].
pub fn margins_map(m: &margins::Margins) -> Map {
    let mut out = Map::new();
    out.insert("gain_margin".into(), Dynamic::from_float(m.gain_margin));
    out.insert(
        "gain_margin_db".into(),
        Dynamic::from_float(m.gain_margin_db),
    );
    out.insert("phase_margin".into(), Dynamic::from_float(m.phase_margin));
    out.insert("gain_crossover".into(), crossover(m.gain_crossover));
    out.insert("phase_crossover".into(), crossover(m.phase_crossover));
    out.insert("delay_margin".into(), Dynamic::from_float(m.delay_margin));
    let list = |v: &[f64]| Dynamic::from_array(float_array(v));
    out.insert("gain_crossovers".into(), list(&m.gain_crossovers));
    out.insert("phase_crossovers".into(), list(&m.phase_crossovers));
    out.insert("gain_margins".into(), list(&m.gain_margins));
    out.insert("phase_margins".into(), list(&m.phase_margins));
    out.insert(
        "stable_closed_loop".into(),
        Dynamic::from_bool(m.stable_closed_loop),
    );
    out
}

crate::builtins! {
    /// the frequency response G(jω) (discrete: G(e^{jω·dt})) at given or automatic frequencies
    ///
    /// w: an angular frequency in rad/s, or an array of them. A single-input
    /// single-output model gives a Complex per frequency, a MIMO model a ComplexMatrix
    /// (outputs × inputs). At a pole on the axis the entries are infinite.
    ///
    /// Without w: an automatic logarithmic grid that covers every pole and zero and
    /// resolves resonances (two decades beyond them; a discrete grid ends at the Nyquist
    /// frequency π/dt), returned as #{ frequency: [rad/s], response: [Complex or
    /// ComplexMatrix] }.
    ///
    /// Method: the model balanced by powers of two, one Hessenberg reduction, then O(n²)
    /// per frequency (Laub 1981); agrees with a dense solve per point to about 1e-14
    /// relative.
    ///
    /// example:
    ///     let g = transfer_function([1], [1, 2]);
    ///     frequency_response(g, 2)   // 0.25-0.25j
    #[family = "frequency domain"]
    fn frequency_response(call, sys: Model, w: Frequencies)
        -> Dynamic as "Complex | [Complex] | ComplexMatrix | [ComplexMatrix]"
    {
        let Frequencies { w, scalar } = w;
        if let Some(k) = w.iter().position(|x| !x.is_finite()) {
            return Err(call.fail(format_args!(
                "frequency {k} is {}, expected a finite number in rad/s",
                w[k]
            )));
        }
        let siso = sys.inputs() == 1 && sys.outputs() == 1;
        let mut r = response::frequency_response(&sys, &w).map_err(call.num())?;
        if scalar {
            return r
                .pop()
                .map(|g| response_value(g, siso))
                .ok_or_else(|| call.fail("no frequency given"));
        }
        Ok(Dynamic::from_array(
            r.into_iter().map(|g| response_value(g, siso)).collect(),
        ))
    }
    fn frequency_response(call, sys: Model) -> Map as "#{ frequency, response }" {
        let w = grid::auto_frequency_grid(&sys, AUTO_POINTS).map_err(call.num())?;
        let siso = sys.inputs() == 1 && sys.outputs() == 1;
        let r = response::frequency_response(&sys, &w).map_err(call.num())?;
        let mut m = Map::new();
        m.insert("frequency".into(), Dynamic::from(Vector::from(w)));
        m.insert(
            "response".into(),
            Dynamic::from_array(r.into_iter().map(|g| response_value(g, siso)).collect()),
        );
        Ok(m)
    }

    /// the numbers the Bode plot draws at given frequencies: gain in dB and unwrapped phase in degrees
    ///
    /// sys: a single-input single-output model (for a MIMO model pick a channel first, e.g.
    /// sys.channel(i, j)); w: an array of positive angular frequencies in rad/s, strictly
    /// ascending (discrete: G(e^{jω·dt}); frequencies past the Nyquist frequency π/dt only
    /// repeat lower ones and are warned about).
    ///
    /// frequency: the array w; magnitude_db: 20·log10|G|; phase_deg: the phase unwrapped
    /// exactly as plot_bode draws it — continuous along the plot's refined grid, starting
    /// on the low-frequency asymptote k·90° (k the zeros minus the poles at the origin).
    /// NaN where G is zero or infinite (a pole on the axis). Use it to export or test the
    /// plotted curves.
    ///
    /// example:
    ///     let g = transfer_function([1], [1, 1, 0, 0]);   // 1/(s²(s+1))
    ///     let b = bode_data(g, [0.01, 1, 100]);
    ///     b.phase_deg[0]   // -180.57…, on the −180° asymptote
    #[family = "frequency domain"]
    fn bode_data(call, sys: Model, w: Frequencies) -> Map as "#{ frequency, magnitude_db, phase_deg }" {
        if sys.inputs() != 1 || sys.outputs() != 1 {
            return Err(call.fail(format_args!(
                "sys must be single-input single-output, found {} outputs × {} inputs; \
                 pick one channel first, e.g. sys.channel(0, 0)",
                sys.outputs(),
                sys.inputs()
            )));
        }
        let w = w.w;
        if sys.is_discrete() {
            // A sampled model's response is periodic in ω with period 2π/dt and mirrored
            // about π/dt: values beyond the Nyquist frequency repeat, they add nothing.
            let nyquist = std::f64::consts::PI / sys.dt;
            if let Some(top) = w.iter().copied().find(|&x| x > nyquist * (1.0 + 1e-12)) {
                call.warn(format_args!(
                    "frequencies above the Nyquist frequency π/dt = {nyquist} rad/s of this \
                     sampled model (first: {top} rad/s) only repeat lower ones"
                ));
            }
        }
        let c = curves::bode_at(&sys, &w).map_err(call.num())?;
        let mut m = Map::new();
        m.insert("frequency".into(), Dynamic::from(Vector::from(c.frequency)));
        m.insert("magnitude_db".into(), Dynamic::from(Vector::from(c.magnitude_db)));
        m.insert("phase_deg".into(), Dynamic::from(Vector::from(c.phase_deg)));
        Ok(m)
    }

    /// gain, phase and delay margins of a SISO loop gain, with every crossover
    ///
    /// loop_gain: the open loop L (System or TransferFunction) of the unity negative
    /// feedback loop. gain_margin: a plain ratio 1/|L| at the phase crossover (the one
    /// closest to 0 dB of all), gain_margin_db its value in dB; phase_margin in degrees,
    /// 180° + ∠L at the gain crossover (the one with the smallest |PM|), wrapped into
    /// (−180°, 180°]; gain_crossover (|L| = 1) and phase_crossover (phase −180° mod 360°)
    /// in rad/s; delay_margin in seconds (the smallest added delay that destabilises the
    /// loop; 0 when the closed loop is already unstable).
    ///
    /// A margin that does not exist is inf (the phase never reaches −180°, |L| never
    /// crosses 1) — test with is_infinite(m.gain_margin); its missing crossover frequency
    /// is () — test with m.phase_crossover == (). gain_crossovers, phase_crossovers
    /// (rad/s) and gain_margins, phase_margins list every crossing in ascending frequency;
    /// stable_closed_loop says whether L/(1 + L) is stable. Every crossing is refined to
    /// full precision by Brent's method.
    ///
    /// example:
    ///     let l = transfer_function([1], [1, 3, 2, 0]);   // 1/(s(s+1)(s+2))
    ///     let m = loop_margins(l);
    ///     m.gain_margin   // 6.0, at m.phase_crossover = √2 rad/s
    #[family = "frequency domain"]
    fn loop_margins(call, loop_gain: Model)
        -> Map as "#{ gain_margin, gain_margin_db, phase_margin, gain_crossover, phase_crossover, delay_margin, gain_crossovers, phase_crossovers, gain_margins, phase_margins, stable_closed_loop }"
    {
        margins::loop_margins(&loop_gain)
            .map(|m| margins_map(&m))
            .map_err(call.num())
    }

    /// the first frequency (rad/s) where the gain falls to 1/√2 (−3.01 dB) of its DC value
    ///
    /// SISO models only. inf when the gain never falls that far (a static gain; a discrete
    /// model above the level up to π/dt). An error for an infinite DC gain (an integrator)
    /// or a zero one.
    ///
    /// example:
    ///     bandwidth(transfer_function([1], [0.5, 1]))   // 2.0 = 1/τ
    #[family = "frequency domain"]
    fn bandwidth(call, sys: Model) -> FLOAT {
        norms::bandwidth(&sys).map_err(call.num())
    }

    /// the H2 norm: the root-mean-square of the impulse response over all channels
    ///
    /// Continuous: √trace(C W Cᵀ) with the controllability Gramian W; inf when D ≠ 0 or
    /// the model is not stable. Discrete: includes D (the 2-norm of the sequence D, CB,
    /// CAB, …).
    ///
    /// example:
    ///     h2_norm(transfer_function([3], [1, 2]))   // 1.5 = 3/√(2·2)
    #[family = "frequency domain"]
    fn h2_norm(call, sys: Model) -> FLOAT {
        norms::h2_norm(&sys).map_err(call.num())
    }

    /// the H∞ norm (peak gain over frequency, largest singular value) and where it is reached
    ///
    /// value: sup over ω of σ_max(G(jω)) (discrete: 0 ≤ ω ≤ π/dt), a plain ratio;
    /// frequency in rad/s (inf when the peak is only approached as ω → ∞). An unstable
    /// model gives value inf. Method: Bruinsma & Steinbuch 1990 level-set iteration on a
    /// Hamiltonian matrix.
    ///
    /// example:
    ///     let g = transfer_function([1], [1, 0.2, 1]);
    ///     hinf_norm(g)   // #{ value: 5.025…, frequency: 0.98… }
    #[family = "frequency domain"]
    fn hinf_norm(call, sys: Model) -> Map as "#{ value, frequency }" {
        let (value, w) = norms::hinf_norm(&sys).map_err(call.num())?;
        let mut m = Map::new();
        m.insert("value".into(), Dynamic::from_float(value));
        m.insert("frequency".into(), Dynamic::from_float(w));
        Ok(m)
    }
}
