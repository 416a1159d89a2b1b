//! Help entries of the model built-ins.

use crate::script::docs::Doc;

/// Help entries of the model built-ins.
pub const DOCS: &[Doc] = &[
    Doc { name: "state_space", family: "models",
        usage: "state_space(A, B, C, D) → System\nstate_space(A, B, C, D, dt) → System\nstate_space(tf) → System",
        summary: "a state-space model x' = Ax + Bu, y = Cx + Du (discrete with sample time dt)",
        details: "A n×n, B n×m, C p×n, D p×m (a plain 0 means the zero D). dt in seconds; leave it \
                  out for a continuous model. From a TransferFunction: a minimal realization.",
        example: "let plant = state_space([[0, 1], [-4, -0.8]], [[0], [1]], [[1, 0]], 0);" },
    Doc { name: "transfer_function", family: "models",
        usage: "transfer_function(num, den) → TransferFunction\ntransfer_function(num, den, dt)",
        summary: "a rational transfer function, coefficients highest power first",
        details: "The denominator is scaled to be monic. Must be proper (numerator degree ≤ \
                  denominator degree). With dt the variable is z.",
        example: "let g = transfer_function([2, 1], [1, 3, 2]);" },
    Doc { name: "to_transfer_function", family: "models",
        usage: "to_transfer_function(sys) → TransferFunction (SISO) or [[TransferFunction]]",
        summary: "the transfer function of each channel (grid [output][input] for MIMO)",
        details: "Per channel: a minimal realization, its poles (eigenvalues) and zeros \
                  (generalized eigenvalues of the system pencil), and the gain from one \
                  evaluation — numerically sound at any order.",
        example: "to_transfer_function(state_space([[-2]], [[1]], [[3]], 0))   // 3/(s + 2)" },
    Doc { name: "channel", family: "models", usage: "channel(sys, output, input) → System",
        summary: "the single-input single-output model from one input to one output",
        details: "0-based indices.", example: "let m = state_space([[-1]], [[1, 2]], [[1]], [[0, 0]]);\nchannel(m, 0, 1)" },
    Doc { name: "name_signals", family: "models",
        usage: "name_signals(sys, #{ inputs, outputs, states }) → System",
        summary: "a copy of the model with names for its signals (used in display and plots)",
        details: "Each entry an array of strings, one per signal; any may be left out.",
        example: "let p = name_signals(plant, #{ inputs: [\"force\"], outputs: [\"position\"] });" },
    Doc { name: "A", family: "models", usage: "sys.A, sys.B, sys.C, sys.D → Matrix",
        summary: "the model's matrices", details: "Also sys.dt (0 when continuous), sys.order, \
        sys.input_count, sys.output_count; for a TransferFunction tf.num, tf.den, tf.dt.",
        example: "plant.A" },
    Doc { name: "poles", family: "models", usage: "poles(sys) → [Complex]",
        summary: "the poles (eigenvalues of A), ascending real part then imaginary part",
        details: "", example: "poles(plant)" },
    Doc { name: "zeros", family: "models", usage: "zeros(sys) → [Complex]",
        summary: "transmission zeros, square or non-square models",
        details: "Finite generalized eigenvalues of the system pencil [[A, B], [C, D]] − \
                  λ[[I, 0], [0, 0]] after the reduction of Emami-Naeini & Van Dooren 1982, \
                  computed by the QZ algorithm. For a non-minimal model the uncontrollable or \
                  unobservable modes appear as (decoupling) zeros.",
        example: "zeros(transfer_function([1, 2], [1, 3, 5]))   // [-2+0j]" },
    Doc { name: "dc_gain", family: "models", usage: "dc_gain(sys) → Matrix",
        summary: "steady-state gain D − CA⁻¹B (discrete: D + C(I − A)⁻¹B)",
        details: "A pole at the origin (z = 1 when discrete) in a channel makes that entry ±inf, \
                  the sign of the ramp a positive step produces; uncontrollable or unobservable \
                  integrators do not count.",
        example: "dc_gain(transfer_function([4], [1, 2]))   // 2" },
    Doc { name: "is_stable", family: "models", usage: "is_stable(sys) → bool",
        summary: "every pole strictly in the left half plane (|z| < 1 when discrete)",
        details: "Poles on the boundary (integrators, undamped modes) count as not stable.",
        example: "is_stable(plant)" },
    Doc { name: "modes", family: "models", usage: "modes(sys) → [#{ pole, damping, natural_frequency, time_constant }]",
        summary: "damping ratio, natural frequency (rad/s) and time constant (s) of each mode",
        details: "A complex pair is listed once (its member with positive imaginary part). \
                  Discrete poles are mapped by s = ln(z)/dt. time_constant = −1/Re(s): \
                  negative for a growing mode, inf on the stability boundary.",
        example: "modes(plant)" },
    Doc { name: "markov_parameters", family: "models", usage: "markov_parameters(sys, count) → [Matrix]",
        summary: "the first count Markov parameters D, CB, CAB, CA²B, …", details: "",
        example: "markov_parameters(plant, 4)" },
    Doc { name: "transform_state", family: "transforms", usage: "transform_state(sys, T) → System",
        summary: "the model in new coordinates x = T z: (T⁻¹AT, T⁻¹B, CT, D)",
        details: "Refuses a singular or numerically singular T; warns when cond(T) > 1e8.",
        example: "transform_state(plant, [[1, 0], [1, 1]])" },
    Doc { name: "modal_realization", family: "transforms", usage: "modal_realization(sys) → #{ system, transform }",
        summary: "real block-diagonal form: real poles on the diagonal, pairs as [[σ, ω], [−ω, σ]]",
        details: "Ordered real Schur form, then block diagonalisation by Sylvester equations \
                  (Bavely & Stewart 1979); repeated or nearly repeated eigenvalues stay in one \
                  coupled block with a warning, rather than inverting an ill-conditioned \
                  eigenvector matrix. Blocks in ascending real part.",
        example: "let m = modal_realization(plant);\nm.system.A" },
    Doc { name: "controllable_realization", family: "transforms",
        usage: "controllable_realization(sys) → #{ system, transform }",
        summary: "controllable companion form (SISO): first row −a₁…−aₙ, B = e₁",
        details: "Requires a controllable single-input single-output model; warns when T is \
                  ill-conditioned (companion forms are, at high order).",
        example: "controllable_realization(plant).system" },
    Doc { name: "observable_realization", family: "transforms",
        usage: "observable_realization(sys) → #{ system, transform }",
        summary: "observable companion form (SISO): first column −a₁…−aₙ, C = e₁ᵀ",
        details: "Requires an observable single-input single-output model.",
        example: "observable_realization(plant).system" },
    Doc { name: "jordan_realization", family: "transforms",
        usage: "jordan_realization(sys) → #{ system, transform }",
        summary: "real Jordan form (always warns: the Jordan structure is numerically fragile)",
        details: "Like modal_realization, with each cluster of a repeated real eigenvalue put \
                  into Jordan chains (ones on the superdiagonal), decided by numerical ranks.",
        example: "jordan_realization(plant)" },
    Doc { name: "balanced_realization", family: "transforms",
        usage: "balanced_realization(sys) → #{ system, transform, hankel_singular_values }",
        summary: "balanced form: both Gramians equal diag(Hankel singular values)",
        details: "Square-root method on Cholesky factors of the Gramians (Hammarling 1982; \
                  Laub, Heath, Paige & Ward 1987). Needs a stable, minimal model.",
        example: "balanced_realization(plant).hankel_singular_values" },
    Doc { name: "balanced_truncation", family: "transforms",
        usage: "balanced_truncation(sys, order) → #{ system, hankel_singular_values, error_bound }",
        summary: "a reduced model of the given order, with the error bound 2·Σ discarded σ",
        details: "error_bound bounds the largest frequency-response error (H∞ norm of the \
                  difference; Glover 1984). Needs a stable model.",
        example: "let r = balanced_truncation(plant, 2);\nr.error_bound" },
    Doc { name: "minimal_realization", family: "transforms",
        usage: "minimal_realization(sys) → #{ system, removed, uncontrollable_removed, unobservable_removed }",
        summary: "removes uncontrollable and unobservable states (orthogonal staircase)",
        details: "Controllability then observability staircase (Van Dooren 1981, Varga 1981); \
                  rank decisions by SVD relative to ‖[A B]‖, never by powers of A.",
        example: "minimal_realization(plant).removed" },
    Doc { name: "kalman_decomposition", family: "transforms",
        usage: "kalman_decomposition(sys) → #{ system, transform, controllable_observable, … }",
        summary: "coordinates that separate the four controllable/observable parts",
        details: "State order: controllable-observable, controllable-unobservable, \
                  uncontrollable-observable, uncontrollable-unobservable; the map gives each \
                  part's dimension.",
        example: "kalman_decomposition(plant)" },
    Doc { name: "controllability_matrix", family: "transforms", usage: "controllability_matrix(sys) → Matrix",
        summary: "[B, AB, …, Aⁿ⁻¹B] (for display; decisions use the staircase)", details: "",
        example: "controllability_matrix(plant)" },
    Doc { name: "observability_matrix", family: "transforms", usage: "observability_matrix(sys) → Matrix",
        summary: "[C; CA; …; CAⁿ⁻¹] (for display; decisions use the staircase)", details: "",
        example: "observability_matrix(plant)" },
    Doc { name: "is_controllable", family: "transforms", usage: "is_controllable(sys) → bool",
        summary: "whether every mode can be moved by the inputs",
        details: "Orthogonal controllability staircase with SVD rank decisions at \
                  10·max(n, m)·ε·‖[A B]‖; see uncontrollable_modes for which modes fail.",
        example: "is_controllable(plant)" },
    Doc { name: "is_observable", family: "transforms", usage: "is_observable(sys) → bool",
        summary: "whether every mode shows in the outputs", details: "Dual of is_controllable.",
        example: "is_observable(plant)" },
    Doc { name: "uncontrollable_modes", family: "transforms", usage: "uncontrollable_modes(sys) → [Complex]",
        summary: "the eigenvalues of the uncontrollable part", details: "",
        example: "uncontrollable_modes(plant)" },
    Doc { name: "unobservable_modes", family: "transforms", usage: "unobservable_modes(sys) → [Complex]",
        summary: "the eigenvalues of the unobservable part", details: "",
        example: "unobservable_modes(plant)" },
    Doc { name: "controllability_gramian", family: "transforms", usage: "controllability_gramian(sys) → Matrix",
        summary: "Wc solving A Wc + Wc Aᵀ + B Bᵀ = 0 (discrete: A Wc Aᵀ − Wc + B Bᵀ = 0)",
        details: "Bartels–Stewart on the real Schur form; needs a stable model.",
        example: "controllability_gramian(plant)" },
    Doc { name: "observability_gramian", family: "transforms", usage: "observability_gramian(sys) → Matrix",
        summary: "Wo solving Aᵀ Wo + Wo A + Cᵀ C = 0 (discrete analogue)", details: "",
        example: "observability_gramian(plant)" },
    Doc { name: "hankel_singular_values", family: "transforms", usage: "hankel_singular_values(sys) → [float]",
        summary: "√eig(Wc·Wo), descending, from Cholesky factors of the Gramians", details: "",
        example: "hankel_singular_values(plant)" },
    Doc { name: "equivalence", family: "equivalence",
        usage: "equivalence(a, b) → #{ equivalent, reason, markov_error, frequency_error, margin, transform }",
        summary: "whether two models have the same input–output behaviour, and why",
        details: "Compares time-scaled Markov parameters up to a.order + b.order (tolerance \
                  1e-8 relative) and cross-checks the frequency responses on a grid covering \
                  every pole (1e-6). Where the data are ill-conditioned (a model reached \
                  through a badly conditioned transform), a quantity's tolerance rises to \
                  30·n·ε times its sensitivity to rounding-level changes of A, B, C, and the \
                  reason says how far the data resolve it. margin is the largest difference \
                  over its tolerance (≤ 1 when equivalent); between 0.1 and 10 the reason calls \
                  the verdict borderline. When both models are minimal and of equal order, \
                  transform is the T with b = transform_state(a, T); otherwise ().",
        example: "equivalence(plant, modal_realization(plant).system).equivalent   // true" },
    Doc { name: "find_transform", family: "equivalence", usage: "find_transform(a, b) → Matrix",
        summary: "the T with b = transform_state(a, T), or an error saying why none exists",
        details: "", example: "find_transform(plant, balanced_realization(plant).system)" },
    Doc { name: "save_model", family: "output and files", usage: "save_model(sys, path)",
        summary: "writes a model as a versioned statebook JSON model file",
        details: "The format is documented in docs/model-format.md.",
        example: "save_model(plant, \"plant.model.json\");" },
    Doc { name: "load_model", family: "output and files", usage: "load_model(path) → System or TransferFunction",
        summary: "reads a statebook JSON model file", details: "",
        example: "let p = load_model(\"plant.model.json\");" },
];
