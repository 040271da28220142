//! The nonlinear least-squares engine (used by the joint θ fit) against NIST StRD nonlinear
//! regression datasets. Source: NIST Statistical Reference Datasets, files copied verbatim into
//! tests/data/nist/ (certified parameters, standard deviations and residual sum of squares in
//! each file's header). Both of NIST's start values are tried.

use thetaseek::numerics::nonlinear::{fit_nonlinear, LeastSquaresProblem};

type Model = fn(&[f64], f64) -> (f64, Vec<f64>);

struct Dataset {
    x: Vec<f64>,
    y: Vec<f64>,
    starts: [Vec<f64>; 2],
    certified: Vec<f64>,
    certified_sd: Vec<f64>,
    certified_rss: f64,
}

fn parse(text: &str) -> Dataset {
    let mut starts = [Vec::new(), Vec::new()];
    let (mut certified, mut certified_sd) = (Vec::new(), Vec::new());
    let mut certified_rss = f64::NAN;
    let (mut x, mut y) = (Vec::new(), Vec::new());
    let mut in_data = false;
    for line in text.lines() {
        let t: Vec<&str> = line.split_whitespace().collect();
        if in_data {
            if t.len() == 2 {
                y.push(t[0].parse().unwrap());
                x.push(t[1].parse().unwrap());
            }
        } else if line.trim_start().starts_with("Data:") && t.get(1) == Some(&"y") {
            in_data = true;
        } else if t.len() == 6 && t[0].starts_with('b') && t[1] == "=" {
            starts[0].push(t[2].parse().unwrap());
            starts[1].push(t[3].parse().unwrap());
            certified.push(t[4].parse().unwrap());
            certified_sd.push(t[5].parse().unwrap());
        } else if line.starts_with("Residual Sum of Squares:") {
            certified_rss = t.last().unwrap().parse().unwrap();
        }
    }
    Dataset { x, y, starts, certified, certified_sd, certified_rss }
}

struct Problem<'a> {
    data: &'a Dataset,
    model: Model,
}

impl LeastSquaresProblem for Problem<'_> {
    fn residual_count(&self) -> usize {
        self.data.x.len()
    }
    fn residuals(&self, b: &[f64]) -> Vec<f64> {
        self.data.x.iter().zip(&self.data.y).map(|(x, y)| (self.model)(b, *x).0 - y).collect()
    }
    fn jacobian_columns(&self, b: &[f64], out: &mut [f64], rows: usize) {
        for (i, x) in self.data.x.iter().enumerate() {
            for (k, d) in (self.model)(b, *x).1.into_iter().enumerate() {
                out[k * rows + i] = d;
            }
        }
    }
}

// Models as written in each file's header, with analytic derivatives.
fn exponential_rise(b: &[f64], x: f64) -> (f64, Vec<f64>) {
    let e = (-b[1] * x).exp();
    (b[0] * (1.0 - e), vec![1.0 - e, b[0] * x * e])
}
fn chwirut(b: &[f64], x: f64) -> (f64, Vec<f64>) {
    let d = b[1] + b[2] * x;
    let f = (-b[0] * x).exp() / d;
    (f, vec![-x * f, -f / d, -x * f / d])
}
fn danwood(b: &[f64], x: f64) -> (f64, Vec<f64>) {
    let p = x.powf(b[1]);
    (b[0] * p, vec![p, b[0] * p * x.ln()])
}
fn thurber(b: &[f64], x: f64) -> (f64, Vec<f64>) {
    let n = b[0] + b[1] * x + b[2] * x * x + b[3] * x.powi(3);
    let d = 1.0 + b[4] * x + b[5] * x * x + b[6] * x.powi(3);
    let f = n / d;
    (f, vec![1.0 / d, x / d, x * x / d, x.powi(3) / d, -f * x / d, -f * x * x / d, -f * x.powi(3) / d])
}
fn mgh09(b: &[f64], x: f64) -> (f64, Vec<f64>) {
    let n = x * x + x * b[1];
    let d = x * x + x * b[2] + b[3];
    (b[0] * n / d, vec![n / d, b[0] * x / d, -b[0] * n * x / (d * d), -b[0] * n / (d * d)])
}
fn eckerle4(b: &[f64], x: f64) -> (f64, Vec<f64>) {
    let z = (x - b[2]) / b[1];
    let e = (-0.5 * z * z).exp();
    let f = b[0] / b[1] * e;
    (f, vec![e / b[1], f / b[1] * (z * z - 1.0), f * z / b[1]])
}
fn rat43(b: &[f64], x: f64) -> (f64, Vec<f64>) {
    let e = (b[1] - b[2] * x).exp();
    let u = 1.0 + e;
    let f = b[0] * u.powf(-1.0 / b[3]);
    let du = -f / (b[3] * u);
    (f, vec![f / b[0], du * e, -du * e * x, f * u.ln() / (b[3] * b[3])])
}

const CASES: &[(&str, Model)] = &[
    ("Misra1a", exponential_rise),
    ("Chwirut2", chwirut),
    ("DanWood", danwood),
    ("BoxBOD", exponential_rise),
    ("Thurber", thurber),
    ("MGH09", mgh09),
    ("Eckerle4", eckerle4),
    ("Rat43", rat43),
];

fn text(name: &str) -> String {
    std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("tests/data/nist/{name}.dat")),
    )
    .unwrap()
}

fn digits(got: f64, want: f64) -> f64 {
    if got == want {
        return 16.0;
    }
    -((got - want).abs() / want.abs()).log10()
}

#[test]
fn certified_parameters_are_reached_to_six_significant_digits_from_nist_starts() {
    let mut failures = Vec::new();
    for (name, model) in CASES {
        let data = parse(&text(name));
        assert_eq!(data.certified.len(), data.starts[0].len(), "{name}");
        for (k, start) in data.starts.iter().enumerate() {
            let problem = Problem { data: &data, model: *model };
            let label = format!("{name} start {}", k + 1);
            let fit = match fit_nonlinear(&problem, start, 2000) {
                Ok(fit) => fit,
                Err(e) => {
                    failures.push(format!("{label}: {e}"));
                    continue;
                }
            };
            let worst_b = fit.parameters.iter().zip(&data.certified).map(|(g, w)| digits(*g, *w)).fold(16.0, f64::min);
            let worst_sd =
                fit.standard_errors.iter().zip(&data.certified_sd).map(|(g, w)| digits(*g, *w)).fold(16.0, f64::min);
            let rss = digits(fit.rss, data.certified_rss);
            println!(
                "{label}: parameters {worst_b:.1} digits, SDs {worst_sd:.1}, RSS {rss:.1}, {} iterations",
                fit.iterations
            );
            if worst_b < 6.0 || worst_sd < 6.0 || rss < 6.0 {
                failures.push(format!("{label}: parameters {worst_b:.1} digits, SDs {worst_sd:.1}, RSS {rss:.1}"));
            }
        }
    }
    // BoxBOD from start 1 (b1 = 1, b2 = 1) slides onto the plateau b2 → ∞, where the model is the
    // constant b1 = mean(y) and ∂f/∂b2 vanishes: a local trap the file itself rates "higher
    // difficulty". Start 2 reaches the certified values. Any other failure is a regression.
    let names: Vec<&str> = failures.iter().map(|f| f.split(':').next().unwrap()).collect();
    assert_eq!(names, ["BoxBOD start 1"], "{failures:#?}");
}
