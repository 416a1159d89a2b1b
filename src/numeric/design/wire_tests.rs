use super::*;
use crate::numeric::design::interconnect::{feedback, parallel, series, unity_feedback, Sign};
use crate::numeric::freq::response::FrequencyEvaluator;
use crate::numeric::testing::{siso, Rng};
use nalgebra::Complex;

type C64 = Complex<f64>;

const POINTS: [C64; 4] = [
    C64::new(0.0, 0.2),
    C64::new(0.0, 1.3),
    C64::new(0.0, 7.0),
    C64::new(0.5, -2.0),
];

fn at(sys: &StateSpace, s: C64) -> DMatrix<C64> {
    FrequencyEvaluator::new(sys).unwrap().at_point(s)
}

fn close(a: &DMatrix<C64>, b: &DMatrix<C64>, tol: f64) {
    assert_eq!(a.shape(), b.shape());
    let err = (a - b).norm() / b.norm().max(1e-300);
    assert!(err < tol, "relative difference {err:e}\n{a}\n{b}");
}

fn part(name: &str, model: StateSpace) -> Part {
    Part {
        name: name.into(),
        model,
    }
}

fn spec(inputs: &[&str], connections: &[&str], outputs: &[&str]) -> WireSpec {
    let v = |s: &[&str]| s.iter().map(|x| x.to_string()).collect();
    WireSpec {
        inputs: v(inputs),
        connections: v(connections),
        outputs: v(outputs),
    }
}

fn random(rng: &mut Rng, n: usize, m: usize, p: usize) -> StateSpace {
    StateSpace::new(
        rng.stable(n),
        rng.matrix(n, m),
        rng.matrix(p, n),
        rng.matrix(p, m),
        0.0,
    )
    .unwrap()
}

fn named(mut s: StateSpace, inputs: &[&str], outputs: &[&str]) -> StateSpace {
    s.names.inputs = inputs.iter().map(|x| x.to_string()).collect();
    s.names.outputs = outputs.iter().map(|x| x.to_string()).collect();
    s
}

fn err(parts: &[Part], s: &WireSpec) -> String {
    wire(parts, s).unwrap_err().to_string()
}

#[test]
fn a_unity_feedback_loop_equals_close_loop_of_the_series() {
    // Source: r → e = r − y → K → G → y is close_loop(G K) by definition; compared with
    // the block-matrix construction of interconnect.rs.
    let g = siso(&[0.0, 1.0, -2.0, -0.3], &[0.0, 1.0], &[1.0, 0.0], 0.0);
    let k = siso(&[-5.0], &[4.0], &[-3.0], 2.0);
    let parts = [part("plant", g.clone()), part("ctrl", k.clone())];
    let w = wire(
        &parts,
        &spec(
            &["r"],
            &["ctrl = r - plant", "plant = ctrl"],
            &["plant", "u = ctrl"],
        ),
    )
    .unwrap();
    assert!(w.notes.is_empty(), "{:?}", w.notes);
    let reference = unity_feedback(&series(&g, &k).unwrap()).unwrap();
    assert_eq!(w.model.order(), 3);
    assert_eq!(w.model.names.inputs, ["r"]);
    assert_eq!(w.model.names.outputs, ["y0", "u"]);
    assert_eq!(w.model.names.states, ["plant.x0", "plant.x1", "ctrl.x0"]);
    for s in POINTS {
        let got = at(&w.model, s);
        close(&got.rows(0, 1).into_owned(), &at(&reference, s), 1e-12);
        // u = K (r − y) = K S r.
        let ks = at(&k, s)[(0, 0)] / (C64::new(1.0, 0.0) + at(&g, s)[(0, 0)] * at(&k, s)[(0, 0)]);
        assert!((got[(1, 0)] - ks).norm() < 1e-12 * ks.norm());
    }
}

#[test]
fn series_parallel_and_feedback_paths_match_the_operators() {
    // Source: series, parallel and feedback of interconnect.rs cover these cases.
    let mut rng = Rng::new(71);
    let g = random(&mut rng, 3, 2, 2);
    let h = random(&mut rng, 2, 2, 2);
    let parts = [part("g", g.clone()), part("h", h.clone())];
    let chain = wire(
        &parts,
        &spec(
            &["a", "b"],
            &["h.u0 = a", "h.u1 = b", "g.u0 = h.y0", "g.u1 = h.y1"],
            &["g.y0", "g.y1"],
        ),
    )
    .unwrap();
    let sum = wire(
        &parts,
        &spec(
            &["a", "b"],
            &["h.u0 = a", "h.u1 = b", "g.u0 = a", "g.u1 = b"],
            &["p0 = g.y0 - h.y0", "p1 = g.y1 - h.y1"],
        ),
    )
    .unwrap();
    let loop_ = wire(
        &parts,
        &spec(
            &["a", "b"],
            &[
                "g.u0 = a - h.y0",
                "g.u1 = b - h.y1",
                "h.u0 = g.y0",
                "h.u1 = g.y1",
            ],
            &["g.y0", "g.y1"],
        ),
    )
    .unwrap();
    let (gs, ps, fb) = (
        series(&g, &h).unwrap(),
        parallel(&g, &h, Sign::Minus).unwrap(),
        feedback(&g, &h, Sign::Minus).unwrap(),
    );
    for s in POINTS {
        close(&at(&chain.model, s), &at(&gs, s), 1e-12);
        close(&at(&sum.model, s), &at(&ps, s), 1e-12);
        close(&at(&loop_.model, s), &at(&fb, s), 1e-11);
    }
}

/// The interconnection solved at one point s, independently of the state-space
/// elimination: the stacked part responses G(s), then (I − G M) Y = G N r.
fn reference_at(
    parts: &[&StateSpace],
    m: &DMatrix<f64>,
    nm: &DMatrix<f64>,
    s: C64,
) -> DMatrix<C64> {
    let py: usize = parts.iter().map(|p| p.outputs()).sum();
    let mu: usize = parts.iter().map(|p| p.inputs()).sum();
    let mut g = DMatrix::<C64>::zeros(py, mu);
    let (mut i, mut j) = (0, 0);
    for p in parts {
        g.view_mut((i, j), (p.outputs(), p.inputs()))
            .copy_from(&at(p, s));
        i += p.outputs();
        j += p.inputs();
    }
    let mc = m.map(|v| C64::new(v, 0.0));
    let nc = nm.map(|v| C64::new(v, 0.0));
    let lhs = DMatrix::<C64>::identity(py, py) - &g * &mc;
    lhs.lu().solve(&(&g * &nc)).unwrap()
}

#[test]
fn ten_seeded_mimo_loops_match_the_frequency_domain_solution() {
    // Source: a two-degree-of-freedom loop (plant 2×3 with feedthrough, controller 3×4
    // reading the reference and the measurement, sensor 2×2, disturbance on one plant
    // input), solved pointwise as (I − G(s) M) Y = G(s) N r from its block matrices.
    for seed in 0..10 {
        let mut rng = Rng::new(100 + seed);
        let plant = named(
            random(&mut rng, 4, 3, 2),
            &["f1", "f2", "load"],
            &["p1", "p2"],
        );
        let ctrl = random(&mut rng, 3, 4, 2);
        let sensor = named(random(&mut rng, 2, 2, 2), &["in1", "in2"], &["m1", "m2"]);
        let parts = [
            part("plant", plant.clone()),
            part("ctrl", ctrl.clone()),
            part("sensor", sensor.clone()),
        ];
        let w = wire(
            &parts,
            &spec(
                &["r1", "r2", "d"],
                &[
                    "plant.f1 = ctrl.y0",
                    "plant.f2 = ctrl.y1 + 0.5*d",
                    "plant.load = d",
                    "sensor.in1 = plant.p1",
                    "sensor.in2 = plant.p2",
                    "ctrl.u0 = r1",
                    "ctrl.u1 = r2",
                    "ctrl.u2 = -sensor.m1",
                    "ctrl.u3 = -1e0*sensor.m2 + 2.5e-1*plant.p1",
                ],
                &["plant.p1", "plant.p2", "ctrl.y0", "ctrl.y1"],
            ),
        )
        .unwrap();
        assert_eq!(w.model.names.outputs, ["p1", "p2", "y0", "y1"]);
        assert_eq!(w.model.order(), 9);
        // Stacked order: plant (f1 f2 load | p1 p2), ctrl (u0..u3 | y0 y1), sensor.
        let mut m = DMatrix::zeros(9, 6);
        let mut nm = DMatrix::zeros(9, 3);
        m[(0, 2)] = 1.0;
        m[(1, 3)] = 1.0;
        nm[(1, 2)] = 0.5;
        nm[(2, 2)] = 1.0;
        m[(7, 0)] = 1.0;
        m[(8, 1)] = 1.0;
        nm[(3, 0)] = 1.0;
        nm[(4, 1)] = 1.0;
        m[(5, 4)] = -1.0;
        m[(6, 5)] = -1.0;
        m[(6, 0)] = 0.25;
        for s in POINTS {
            let y = reference_at(&[&plant, &ctrl, &sensor], &m, &nm, s);
            let want = DMatrix::from_fn(4, 3, |i, j| y[(i, j)]);
            close(&at(&w.model, s), &want, 1e-11);
        }
    }
}

#[test]
fn algebraic_loops_are_solved_judged_units_free_and_named_when_singular() {
    // Source: two static gains a and b in a positive loop y_a = a (r + y_b), y_b = b y_a
    // give y_a = a r/(1 − a b) (hand-derived).
    let gain = |k: f64| {
        StateSpace::new(
            DMatrix::zeros(0, 0),
            DMatrix::zeros(0, 1),
            DMatrix::zeros(1, 0),
            DMatrix::from_element(1, 1, k),
            0.0,
        )
        .unwrap()
    };
    let loop_spec = spec(&["r"], &["a = r + b", "b = a"], &["a"]);
    for scale in [1.0, 1e6, 1e-6] {
        let parts = [part("a", gain(2.0 * scale)), part("b", gain(0.25 / scale))];
        let w = wire(&parts, &loop_spec).unwrap();
        assert!(w.notes.is_empty(), "scale {scale}: {:?}", w.notes);
        let want = 2.0 * scale / (1.0 - 0.5);
        assert!(
            (w.model.d[(0, 0)] - want).abs() < 1e-14 * want,
            "scale {scale}"
        );
        // a b = 1 exactly: no solution, whatever the units.
        let parts = [part("a", gain(4.0 * scale)), part("b", gain(0.25 / scale))];
        let e = err(&parts, &loop_spec);
        assert!(e.contains("algebraic loop through a.y0, b.y0"), "{e}");
    }
}

#[test]
fn unused_signals_are_notes_and_mistakes_are_errors_naming_them() {
    let plant = named(
        siso(&[-1.0], &[1.0], &[1.0], 0.0),
        &["force"],
        &["position"],
    );
    let mut two = plant.clone();
    two.c = DMatrix::from_row_slice(2, 1, &[1.0, 2.0]);
    two.d = DMatrix::zeros(2, 1);
    two.names.outputs = vec!["position".into(), "speed".into()];
    let parts = [
        part("stage", two.clone()),
        part("k", siso(&[], &[], &[], 3.0)),
    ];
    let w = wire(
        &parts,
        &spec(
            &["r", "spare"],
            &["k = r - stage.position", "stage.force = k"],
            &["stage.position"],
        ),
    )
    .unwrap();
    assert_eq!(w.notes.len(), 2, "{:?}", w.notes);
    assert!(w.notes[0].contains("stage.speed"), "{:?}", w.notes);
    assert!(w.notes[1].contains("spare"), "{:?}", w.notes);

    let s = |c: &[&str], o: &[&str]| spec(&["r"], c, o);
    let good = ["k = r - stage.position", "stage.force = k"];
    let cases: Vec<(WireSpec, &str)> = vec![
        (
            s(&["k = r - stage.pos", "stage.force = k"], &["stage"]),
            "no signal 'pos' (outputs: position, speed",
        ),
        (
            s(&["k = r - plant.position", "stage.force = k"], &["k"]),
            "unknown part 'plant' (parts: stage, k)",
        ),
        (
            s(&["k = r - stage", "stage.force = k"], &["k"]),
            "part 'stage' has 2 outputs",
        ),
        (
            s(
                &[
                    "k = r - stage.position",
                    "stage.force = k",
                    "stage.force = r",
                ],
                &["k"],
            ),
            "input stage.force is driven twice",
        ),
        (
            s(&["k = r - stage.position"], &["k"]),
            "this input is not driven: stage.force",
        ),
        (
            s(&["k = r - stage.force", "stage.force = k"], &["k"]),
            "'stage.force' is an input",
        ),
        (s(&good, &["k", "k"]), "output 'k.y0' kept twice"),
        (s(&good, &["stage.position - r"]), "name a combined output"),
        (s(&good, &[]), "no outputs kept"),
        (
            s(&["k = r - 2 stage.position", "stage.force = k"], &["k"]),
            "is not a signal name",
        ),
        (
            s(&["k = r - x*stage.position", "stage.force = k"], &["k"]),
            "'x' is not a finite number",
        ),
        (
            s(&["k r", "stage.force = k"], &["k"]),
            "expected 'part.input = sum",
        ),
        (
            s(&["r = stage.position", "stage.force = k"], &["k"]),
            "'r' is an external input",
        ),
        (
            s(&["k = q", "stage.force = k"], &["k"]),
            "unknown signal 'q'",
        ),
    ];
    for (spec, want) in cases {
        let e = err(&parts, &spec);
        assert!(e.contains(want), "{:?}: {e}", spec.connections);
    }
    let e = err(&[part("r", plant.clone())], &spec(&["r"], &[], &["r"]));
    assert!(e.contains("both an external input and a part"), "{e}");
    let e = err(
        &[part("a", plant.clone()), part("a", plant.clone())],
        &s(&[], &["a"]),
    );
    assert!(e.contains("part 'a' given twice"), "{e}");
    let e = err(&[part("a b", plant.clone())], &s(&[], &["a"]));
    assert!(e.contains("must be letters"), "{e}");
    let sampled = StateSpace {
        dt: 0.1,
        ..plant.clone()
    };
    assert!(wire(&[part("a", plant), part("b", sampled)], &s(&[], &["a"])).is_err());
}

#[test]
fn positional_names_signs_gains_and_qualified_outputs() {
    // Source: two integrators 1/s fed as y = ∫(2 r₁ − 0.5 r₂) and y = ∫ r₂; the kept
    // outputs share the name y0, so both are qualified; "e = a - b" is the difference.
    let integ = siso(&[0.0], &[1.0], &[1.0], 0.0);
    let parts = [part("a", integ.clone()), part("b", integ)];
    let w = wire(
        &parts,
        &spec(
            &["r1", "r2"],
            &["a.u0 = +2*r1 - 0.5*r2", "b = r2"],
            &["a", "b.y0", "e = a - b", "drive = a.u0"],
        ),
    )
    .unwrap();
    assert_eq!(w.model.names.outputs, ["a.y0", "b.y0", "e", "drive"]);
    let s = C64::new(0.0, 2.0);
    let g = at(&w.model, s);
    let inv = C64::new(1.0, 0.0) / s;
    let want = [
        [inv * 2.0, inv * -0.5],
        [C64::new(0.0, 0.0), inv],
        [inv * 2.0, inv * -1.5],
        [C64::new(2.0, 0.0), C64::new(-0.5, 0.0)],
    ];
    for (i, row) in want.iter().enumerate() {
        for (j, v) in row.iter().enumerate() {
            assert!(
                (g[(i, j)] - v).norm() < 1e-15,
                "({i},{j}) {} vs {v}",
                g[(i, j)]
            );
        }
    }
}
