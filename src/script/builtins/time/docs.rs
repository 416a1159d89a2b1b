//! Help entries of the time-domain built-ins.

use crate::script::docs::Doc;

/// Help entries of the time-domain built-ins.
pub const DOCS: &[Doc] = &[
    Doc { name: "discretize", family: "time domain",
        usage: "discretize(sys, dt) → System\ndiscretize(sys, dt, method) → System\ndiscretize(sys, dt, #{ method: \"tustin\", prewarp: w })",
        summary: "the discrete model with sample time dt (zero-order hold unless a method is given)",
        details: "dt in seconds (> 0); sys must be continuous (discretizing a discrete model is an \
                  error). method: \"zoh\" (input held between samples), \"foh\" (triangle hold: \
                  input linear between samples; states ξ[k] = x(t_k) − Γ₂u[k]), \"tustin\" \
                  (bilinear map; prewarp w in rad/s, 0 < w < π/dt, makes the frequency response \
                  exact at w), \"impulse\" (impulse invariance: hd[k] = dt·h(k·dt), so Bd = e^{A dt} \
                  B dt and Dd = C B dt; needs D = 0), \"matched\" (single-input single-output: \
                  poles and finite zeros mapped by z = e^{s dt}, zeros at infinity to z = −1, \
                  low-frequency gain matched). Hold methods use one block matrix exponential \
                  (Van Loan 1978).",
        example: "let plant = state_space([[0, 1], [-4, -0.8]], [[0], [1]], [[1, 0]], 0);\nlet pd = discretize(plant, 0.05);\nlet pt = discretize(plant, 0.05, #{ method: \"tustin\", prewarp: 2 });" },
    Doc { name: "to_continuous", family: "time domain", usage: "to_continuous(sysd) → System",
        summary: "the continuous model whose zero-order hold is sysd (matrix logarithm)",
        details: "Inverts discretize(sys, dt): [A B] is the top of log([Ad Bd; 0 I])/dt. Fails, \
                  naming the eigenvalue, when Ad has an eigenvalue on the closed negative real \
                  axis (0 included): then no real continuous model has this hold. Poles come back \
                  with |Im s| < π/dt (faster oscillations are aliased).",
        example: "let back = to_continuous(discretize(plant, 0.05));" },
    Doc { name: "step_response", family: "time domain",
        usage: "step_response(sys) → Response\nstep_response(sys, t_final) → Response",
        summary: "the response to a unit step on each input, from rest",
        details: "t_final in seconds. Several inputs give an array of Responses, one per input. \
                  Samples are exact (discretised state transition, no ODE solver). Automatic \
                  horizon when t_final is omitted: 7 time constants of the slowest stable pole \
                  (7/|Re s|), 4 e-folding times of an unstable one, 3 periods of an undamped \
                  oscillation, 10 s when only integrators remain; the step aims at 20 samples per \
                  fastest time scale 1/|s|, with 201 to 10001 samples. A discrete model uses its \
                  dt (poles mapped by s = ln(z)/dt for the rule).",
        example: "let r = step_response(plant);\nshow(r);\nplot_response(r)" },
    Doc { name: "impulse_response", family: "time domain",
        usage: "impulse_response(sys) → Response\nimpulse_response(sys, t_final) → Response",
        summary: "the response to a unit impulse on each input",
        details: "Continuous: the free motion from x(0⁺) = B (y = C e^{At} B); the feedthrough's \
                  D·δ(t) cannot be sampled and is left out (with a warning when D ≠ 0). Discrete: \
                  the unit pulse u[0] = 1. Horizon rule as step_response.",
        example: "impulse_response(plant, 10)" },
    Doc { name: "free_response", family: "time domain",
        usage: "free_response(sys, x0) → Response\nfree_response(sys, x0, t_final) → Response",
        summary: "the motion from initial state x0 with zero input",
        details: "x0: array of n numbers. t_final in seconds (automatic horizon when omitted).",
        example: "free_response(plant, [1, 0], 20)" },
    Doc { name: "simulate", family: "time domain",
        usage: "simulate(sys, t, u) → Response\nsimulate(sys, t, u, x0)\nsimulate(sys, t, u, x0, #{ hold, states })",
        summary: "the response to an input sampled at uniform times t",
        details: "t: uniform, increasing times ≥ 0 in seconds (linear_grid). u: a Matrix with one \
                  row per sample and one column per input, an array (one input), or a function \
                  of t returning a number or an array. x0: initial state at t[0] (() for zero). \
                  Continuous models: hold \"linear\" (default; u linear between samples, exact for \
                  piecewise-linear u) or \"zoh\" (u[k] held until t[k+1]). Discrete models step \
                  x[k+1] = A x[k] + B u[k] once per sample; t's step must equal dt. states: keep \
                  .x (default true unless samples × states exceeds 1000000; .x then errors).",
        example: "let t = linear_grid(0, 10, 501);\nlet r = simulate(plant, t, |t| sin(2 * t));\nr.y" },
    Doc { name: "step_metrics", family: "time domain",
        usage: "step_metrics(sys_or_response) → #{ rise_time, settling_time, overshoot, peak, peak_time, final_value }\nstep_metrics(sys, t_final)",
        summary: "10–90 % rise time, 2 % settling time, overshoot (%), peak and final value",
        details: "Times in seconds, measured from the start; changes relative to the initial \
                  value. Crossings refined by interpolation, the peak by a parabola. From a model: \
                  an accurate step response (20001 exact samples) with the final value from \
                  dc_gain; the model must be stable (an error names the pole otherwise). From a \
                  Response: the final value is its last sample (run it long enough). Several \
                  inputs/outputs give a table with input and output indices. Undefined entries \
                  (no change, never reaching 90 %, still outside the band at the end) are NaN.",
        example: "step_metrics(plant).overshoot" },
    Doc { name: "integrate_ode", family: "time domain",
        usage: "integrate_ode(f, x0, t_final) → Response\nintegrate_ode(f, x0, t_final, #{ method, rtol, atol, max_step, samples })",
        summary: "solves x' = f(t, x), x(0) = x0 up to t_final (adaptive, explicit or stiff)",
        details: "f: a closure |t, x| … or Fn(\"name\") returning an array of n numbers. method: \
                  \"auto\" (default: Dormand–Prince 5(4), switching to Radau IIA when stiffness \
                  is detected), \"explicit\", \"stiff\". rtol (default 1e-6), atol (1e-9), \
                  max_step in seconds, samples (an array of times, or a count of uniform samples). \
                  The last row of .x is the state at t_final. Errors name the time reached: a \
                  failing or non-finite f, a wrong number of values, step size underflow.",
        example: "let r = integrate_ode(|t, x| [x[1], -x[0]], [1, 0], 10, #{ samples: 101 });\nr.x" },
    Doc { name: "linearize_at", family: "time domain",
        usage: "linearize_at(f, g, x0, u0) → System",
        summary: "the linear model of dx = f(x, u), y = g(x, u) about the point (x0, u0)",
        details: "f and g: closures |x, u| … returning arrays. A = ∂f/∂x, B = ∂f/∂u, C = ∂g/∂x, \
                  D = ∂g/∂u by central differences with steps ε^(1/3)·max(|v|, 1) per variable \
                  (error about 1e-10 relative). The model is in deviations from (x0, u0).",
        example: "let f = |x, u| [x[1], -sin(x[0]) + u[0]];\nlet g = |x, u| [x[0]];\nlinearize_at(f, g, [0, 0], [0])" },
    Doc { name: "plot_response", family: "plots",
        usage: "plot_response(resp) → Figure\nplot_response([resp, …])\nplot_response(resp, options)",
        summary: "each output against time in its own panel; several responses overlaid",
        details: "Panels share the time axis; output names come from the model's signal names. \
                  Legends: a response's input name, else \"response k\". Discrete responses are \
                  drawn as staircases. options as plot.",
        example: "let pd = discretize(plant, 0.1);\nplot_response([step_response(plant), step_response(pd)])" },
    Doc { name: "plot_step", family: "plots",
        usage: "plot_step(sys) → Figure\nplot_step([sys, …])\nplot_step(sys, options)",
        summary: "step responses of one or more models, one panel per output",
        details: "A common automatic horizon (the longest of the models'). A single-input model \
                  alone also shows its final value (dc_gain) as a dashed line. options: as \
                  plot (title, legend — an array of names, one per model, or false — \
                  width, height).",
        example: "plot_step([plant, discretize(plant, 0.2)], #{ legend: [\"continuous\", \"sampled\"] })" },
    Doc { name: "Response", family: "time domain",
        usage: "resp.t → array (s)\nresp.y → Matrix (one row per sample, one column per output)\n\
                resp.x → Matrix (states)\nresp.u → Matrix (inputs)",
        summary: "a time response: samples of time, outputs, states and inputs",
        details: "Returned by step_response, impulse_response, free_response, simulate and \
                  integrate_ode. Row k of y, x and u belongs to time t[k].",
        example: "let r = step_response(plant, 5);\nr.y.get(r.y.rows - 1, 0)" },
];
