//! One self-contained HTML file per run: the answer first, the figures inline as SVG, the
//! tables, and the provenance. No scripts, fonts or requests; every text escaped. The markup is
//! well-formed XML, so tests parse it strictly.

mod viscometry;

use crate::plot::Figure;
use crate::report::plan::PlanReport;
use crate::report::{plus_minus, InputFile, Report};
use crate::units::kelvin_to_celsius;
use std::fmt::Write;

/// Escapes text for HTML element content and attribute values.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for ch in text.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const STYLE: &str = r#"
:root { --ink: #232323; --muted: #5b5b5b; --rule: #d6d6d6; --band: #f3f6f8; --accent: #0072b2; --warn: #d55e00; }
* { box-sizing: border-box; }
body { margin: 0 auto; max-width: 1080px; padding: 1.2rem; color: var(--ink);
       font: 15px/1.45 system-ui, -apple-system, "Segoe UI", sans-serif; }
h1 { font-size: 1.5rem; margin: 0 0 .2rem; }
h2 { font-size: 1.15rem; margin: 2rem 0 .6rem; border-bottom: 2px solid var(--accent); padding-bottom: .2rem; }
h3 { font-size: 1rem; margin: 1.2rem 0 .4rem; }
.lead { color: var(--muted); margin: 0 0 1rem; }
.answer { display: grid; grid-template-columns: repeat(auto-fit, minmax(260px, 1fr)); gap: .8rem; }
.card { border: 1px solid var(--rule); border-left: 5px solid var(--accent); padding: .6rem .8rem; background: var(--band); }
.card .theta { font-size: 1.35rem; font-weight: 600; }
.warn { color: var(--warn); }
.scroll { overflow-x: auto; }
table { border-collapse: collapse; width: 100%; font-size: .9rem; }
th, td { text-align: left; padding: .25rem .5rem; border-bottom: 1px solid var(--rule); vertical-align: top; }
th { background: var(--band); }
td.num { font-variant-numeric: tabular-nums; white-space: nowrap; }
figure { margin: 1rem 0; }
figure svg { max-width: 100%; height: auto; display: block; }
figcaption { color: var(--muted); font-size: .85rem; }
figcaption .file { font-family: monospace; font-size: .75rem; }
.words { color: var(--muted); font-size: .85rem; margin-top: .4rem; }
.cautions { border: 2px solid var(--warn); padding: .6rem 1rem; }
code, pre { font-family: ui-monospace, "SFMono-Regular", Menlo, monospace; font-size: .85rem; }
pre { white-space: pre-wrap; word-break: break-all; background: var(--band); padding: .5rem; }
@media (max-width: 600px) { body { padding: .6rem; font-size: 14px; } }
@media print {
  @page { size: A4; margin: 14mm; }
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  h2 { break-after: avoid; }
  figure, table, .card { break-inside: avoid; }
  .scroll { overflow: visible; }
}
"#;

fn page(title: &str, body: &str) -> String {
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\" />\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\" />\n\
         <title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n{body}</body>\n</html>\n",
        escape(title)
    )
}

/// An SVG figure, inline, without an XML declaration.
fn inline_svg(svg: &str) -> &str {
    match svg.find("<svg") {
        Some(i) => &svg[i..],
        None => svg,
    }
}

fn k_and_c(k: Option<f64>) -> String {
    match k {
        Some(k) => format!("{:.2} °C ({k:.2} K)", kelvin_to_celsius(k)),
        None => "—".into(),
    }
}

fn opt(v: Option<f64>, digits: usize) -> String {
    v.map_or("—".into(), |v| format!("{v:.digits$}"))
}

/// UTC calendar date "YYYY-MM-DD" of a Unix time (civil-from-days, Hinnant's algorithm).
pub fn utc_date(unix_seconds: i64) -> String {
    let z = unix_seconds.div_euclid(86_400) + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!("{year:04}-{month:02}-{day:02}")
}

/// When the report is made: `SOURCE_DATE_EPOCH` if set (for reproducible files), else now.
pub fn report_date() -> String {
    let seconds = std::env::var("SOURCE_DATE_EPOCH").ok().and_then(|v| v.parse::<i64>().ok()).unwrap_or_else(|| {
        std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH).map_or(0, |d| d.as_secs() as i64)
    });
    utc_date(seconds)
}

/// A setting's key for people: words, and its unit suffix as a unit ("a2_tolerance_mol_ml_per_g2"
/// → "a2 tolerance (mol mL/g²)").
fn setting_name(key: &str) -> String {
    const UNITS: [(&str, &str); 11] = [
        ("_mol_ml_per_g2", "mol mL/g²"),
        ("_angstrom2_mol_per_g", "Å² mol/g"),
        ("_j_per_mol_k", "J/(mol K)"),
        ("_ml_per_mol", "mL/mol"),
        ("_g_per_mol", "g/mol"),
        ("_ml_per_g", "mL/g"),
        ("_g_per_ml", "g/mL"),
        ("_per_mol", "mol⁻¹"),
        ("_k", "K"),
        ("_c", "°C"),
        ("_nm", "nm"),
    ];
    match UNITS.iter().find(|(suffix, _)| key.ends_with(suffix)) {
        Some((suffix, unit)) => format!("{} ({unit})", key[..key.len() - suffix.len()].replace('_', " ")),
        None => key.replace('_', " "),
    }
}

/// A setting's value for people: numbers to six significant figures (the JSON keeps them all).
fn setting_value(value: &serde_json::Value) -> String {
    match value {
        serde_json::Value::Null => "—".into(),
        serde_json::Value::String(s) => s.clone(),
        serde_json::Value::Number(n) => match n.as_f64() {
            Some(x) if n.is_f64() && x != 0.0 => {
                let digits = 5 - x.abs().log10().floor() as i32;
                let rounded = if (0..=15).contains(&digits) {
                    let scale = 10f64.powi(digits);
                    (x * scale).round() / scale
                } else {
                    x
                };
                if (1e-3..1e6).contains(&rounded.abs()) {
                    format!("{rounded}")
                } else {
                    format!("{rounded:.5e}").replace(".00000e", "e")
                }
            }
            _ => n.to_string(),
        },
        serde_json::Value::Array(items) => items.iter().map(setting_value).collect::<Vec<_>>().join(" – "),
        other => other.to_string(),
    }
}

/// The settings as a table of named, rounded values.
fn settings_table<T: serde::Serialize>(settings: &T) -> String {
    let mut out = String::from("<div class=\"scroll\"><table>\n<tr><th>setting</th><th>value</th></tr>\n");
    if let Ok(serde_json::Value::Object(map)) = serde_json::to_value(settings) {
        for (key, value) in &map {
            let _ = writeln!(
                out,
                "<tr><td>{}</td><td class=\"num\">{}</td></tr>",
                escape(&setting_name(key)),
                escape(&setting_value(value))
            );
        }
    }
    out.push_str("</table></div>");
    out
}

fn provenance(out: &mut String, tool_version: &str, inputs: &[InputFile], settings_table: &str, date: &str) {
    let _ = writeln!(out, "<section id=\"provenance\">\n<h2>Provenance</h2>");
    let _ = writeln!(out, "<p>thetaseek {} · report made {}</p>", escape(tool_version), escape(date));
    let _ = writeln!(out, "<div class=\"scroll\"><table>\n<tr><th>input file</th><th>SHA-256</th></tr>");
    for i in inputs {
        let _ = writeln!(out, "<tr><td>{}</td><td><code>{}</code></td></tr>", escape(&i.path), escape(&i.sha256));
    }
    let _ = writeln!(out, "</table></div>\n<h3>Settings</h3>\n{settings_table}\n</section>");
}

/// What a figure shows and how to read it, from the kind its file name ends with.
fn caption(file_name: &str) -> &'static str {
    let kinds: [(&str, &str); 9] = [
        ("a2-temperature.svg", "A2 at each temperature with its SE, the fitted Flory–Krigbaum line and θ where it crosses zero; the shaded band is θ's interval."),
        ("reduced-pressure.svg", "Reduced osmotic pressure Π/(cRT) against concentration, one panel per temperature: the intercept is 1/Mn, the slope A2."),
        ("mn-temperature.svg", "Mn at each temperature with its SE: one polymer, so the points should agree within their bars."),
        ("residuals.svg", "Studentised residuals of the per-temperature fits: points beyond ±3 are suspect readings."),
        ("zimm.svg", "Zimm plot per temperature: K c/R extrapolated to zero angle and zero concentration (1/Mw), the slopes giving A2 and Rg."),
        ("huggins-kraemer.svg", "Huggins (ηsp/c, filled, solid) and Kraemer (ln ηrel/c, hollow, dashed) lines of each fraction, one panel per temperature; both meet at [η] (×)."),
        ("mark-houwink.svg", "Left: [η] against M on log scales, one Mark–Houwink line per temperature (slope a). Right: a against T with its SE; where it crosses ½ is the viscometric θ (approximate), shaded its interval."),
        ("stockmayer-fixman.svg", "[η]/M½ against M½ per temperature: the intercept is Kθ, which gives ⟨r²⟩0/M; a flat line means unperturbed chains."),
        ("all-series-a2-temperature.svg", "A2 against temperature for every series together."),
    ];
    kinds.iter().rev().find(|(kind, _)| file_name.ends_with(kind)).map_or("", |(_, text)| text)
}

/// The HTML report of `thetaseek analyze`: `figures` are the SVGs `--figures` would write.
pub fn analyze_html(report: &Report, figures: &[Figure], date: &str) -> String {
    let mut b = String::new();
    let _ = writeln!(b, "<header>\n<h1>θ temperature report</h1>");
    let _ = writeln!(
        b,
        "<p class=\"lead\">{} series from {} file(s). Intervals are {:.0} % confidence.</p>\n</header>",
        report.series.len(),
        report.inputs.len(),
        report.settings.confidence * 100.0
    );

    let _ = writeln!(b, "<section id=\"answer\">\n<h2>Answer</h2>\n<div class=\"answer\">");
    for s in &report.series {
        let _ = writeln!(b, "<div class=\"card\">\n<div><strong>{}</strong></div>", escape(&s.name));
        match s.theta.as_ref() {
            Some(t) if t.theta_k.is_some() => {
                let _ = writeln!(b, "<div class=\"theta\">θ = {}</div>", k_and_c(t.theta_k));
                let interval = match (t.ci_low_k, t.ci_high_k) {
                    (Some(lo), Some(hi)) => format!("{lo:.2}–{hi:.2} K ({})", escape(t.ci_method.label())),
                    (Some(lo), None) => format!("above {lo:.2} K, no upper bound"),
                    _ => t.ci_kind.name().to_string(),
                };
                let _ = writeln!(
                    b,
                    "<div>± {} K · interval {interval}</div>\n<div>crossing: {}{} · model: {}</div>",
                    opt(t.se_k, 2),
                    t.crossing.name(),
                    t.extrapolated_by_k.map_or(String::new(), |e| format!(" by {e:.1} K")),
                    escape(t.model.label())
                );
                if let Some(m) = &t.mn_consistency {
                    let _ = writeln!(
                        b,
                        "<div>Mn = {} g/mol</div>",
                        escape(&plus_minus(m.mean_mn_g_per_mol, m.mean_mn_se_g_per_mol))
                    );
                }
                if let Some(f) = &t.flory {
                    let _ = writeln!(b, "<div>ψ1 = {}</div>", escape(&plus_minus(f.psi1, f.psi1_se)));
                }
            }
            Some(t) => {
                let _ = writeln!(
                    b,
                    "<div class=\"theta\">no θ</div>\n<div>{}</div>",
                    escape(t.reason.as_deref().unwrap_or(""))
                );
            }
            None => match (&s.viscometry, s.viscometry.as_ref().and_then(|v| v.viscometric_theta.as_ref())) {
                (Some(_), Some(t)) => {
                    let _ = writeln!(
                        b,
                        "<div class=\"theta\">viscometric θ ≈ {}</div>\n<div>± {} K · approximate (where a = ½)</div>",
                        k_and_c(Some(t.theta_k)),
                        opt(t.se_k, 2)
                    );
                }
                (Some(_), None) => {
                    let _ = writeln!(b, "<div class=\"theta\">no viscometric θ</div>");
                }
                _ => {
                    let _ = writeln!(
                        b,
                        "<div class=\"theta\">refused</div>\n<div>{}</div>",
                        escape(s.reason.as_deref().unwrap_or(""))
                    );
                }
            },
        }
        if let Some(d) = &s.unperturbed_dimensions {
            let _ = writeln!(
                b,
                "<div>⟨r²⟩0/M = {:.4} Å² mol/g ({})</div>",
                d.unperturbed_r2_over_m_nm2_mol_per_g * 100.0,
                escape(d.route.name())
            );
        }
        if let Some(words) = &s.summary {
            let _ = writeln!(b, "<div class=\"words\">{}</div>", escape(words));
        }
        for w in &s.warnings {
            let _ = writeln!(b, "<div class=\"warn\">⚠ {}</div>", escape(w));
        }
        let _ = writeln!(b, "</div>");
    }
    let _ = writeln!(b, "</div>\n</section>");

    let _ = writeln!(b, "<section id=\"figures\">\n<h2>Figures</h2>");
    for f in figures {
        let _ = writeln!(
            b,
            "<figure>\n{}\n<figcaption>{} <span class=\"file\">({})</span></figcaption>\n</figure>",
            inline_svg(&f.svg),
            escape(caption(&f.file_name)),
            escape(&f.file_name)
        );
    }
    let _ = writeln!(b, "</section>");

    if report.series.iter().any(|s| !s.excluded_readings.is_empty()) {
        let _ = writeln!(
            b,
            "<section id=\"excluded\">\n<h2>Excluded readings</h2>\n<p>Marked in the <code>exclude</code> column: kept as measured, not fitted (hollow circles in the figures).</p>\n<div class=\"scroll\"><table>\n<tr><th>series</th><th>line</th><th>T (°C)</th><th>c (g/mL)</th><th>Π (Pa)</th><th>reason</th></tr>"
        );
        for s in &report.series {
            for e in &s.excluded_readings {
                let _ = writeln!(
                    b,
                    "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td></tr>",
                    escape(&s.name),
                    e.line,
                    opt(e.temperature_c, 2),
                    opt(e.concentration_g_per_ml, 5),
                    opt(e.pressure_pa, 3),
                    escape(&e.reason)
                );
            }
        }
        let _ = writeln!(b, "</table></div>\n</section>");
    }

    let _ = writeln!(b, "<section id=\"fits\">\n<h2>Per-temperature fits</h2>");
    for s in report.series.iter().filter(|s| !s.fits.is_empty()) {
        let _ = writeln!(b, "<h3>{}</h3>\n<div class=\"scroll\"><table>", escape(&s.name));
        let _ = writeln!(
            b,
            "<tr><th>T</th><th>n</th><th>form</th><th>Mn (g/mol)</th><th>A2 (mol mL/g²)</th><th>warnings</th></tr>"
        );
        for f in &s.fits {
            let warnings: Vec<String> = f.warnings.iter().map(|w| escape(&w.message)).collect();
            let _ = writeln!(
                b,
                "<tr><td class=\"num\">{:.2} °C ({:.2} K)</td><td class=\"num\">{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td></tr>",
                f.temperature_c,
                f.temperature_k,
                f.n_points,
                f.virial_form.name(),
                escape(&plus_minus(f.mn_g_per_mol, f.mn_se_g_per_mol)),
                escape(&plus_minus(f.a2_mol_ml_per_g2, f.a2_se_mol_ml_per_g2)),
                warnings.join("<br />")
            );
        }
        let _ = writeln!(b, "</table></div>");
    }
    let _ = writeln!(b, "</section>");

    let scattering: Vec<&crate::report::SeriesReport> =
        report.series.iter().filter(|s| !s.light_scattering.is_empty()).collect();
    if !scattering.is_empty() {
        let _ = writeln!(b, "<section id=\"light-scattering\">\n<h2>Light scattering (weight averages)</h2>");
        for s in scattering {
            let _ = writeln!(b, "<h3>{}</h3>\n<div class=\"scroll\"><table>", escape(&s.name));
            let _ = writeln!(
                b,
                "<tr><th>T</th><th>n</th><th>Mw (g/mol)</th><th>A2 (mol mL/g²)</th><th>A3 (mol mL²/g³)</th><th>Rg (nm)</th><th>α_s</th></tr>"
            );
            for f in &s.light_scattering {
                let a3 = match (f.a3_mol_ml2_per_g3, f.a3_se_mol_ml2_per_g3) {
                    (Some(a), Some(se)) => plus_minus(a, se),
                    _ => "—".into(),
                };
                let rg = match (f.rg_nm, f.rg_se_nm) {
                    (Some(r), Some(se)) => plus_minus(r, se),
                    _ => "—".into(),
                };
                let _ = writeln!(
                    b,
                    "<tr><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                    k_and_c(Some(f.temperature_k)),
                    f.n_points,
                    escape(&plus_minus(f.mw_g_per_mol, f.mw_se_g_per_mol)),
                    escape(&plus_minus(f.a2_mol_ml_per_g2, f.a2_se_mol_ml_per_g2)),
                    escape(&a3),
                    escape(&rg),
                    f.expansion_factor.map_or("—".into(), |a| format!("{a:.3}"))
                );
            }
            let _ = writeln!(b, "</table></div>");
        }
        let _ = writeln!(b, "</section>");
    }
    b.push_str(&viscometry::viscometry_section(report));
    let critical: Vec<(&str, &crate::theta::CriticalRoute)> =
        report.series.iter().filter_map(|s| s.critical.as_ref().map(|c| (s.name.as_str(), c))).collect();
    if !critical.is_empty() {
        let _ = writeln!(b, "<section id=\"critical\">\n<h2>Critical temperatures of fractions (Shultz–Flory)</h2>");
        let _ = writeln!(b, "<div class=\"scroll\"><table>\n<tr><th>series</th><th>fractions</th><th>θ</th><th>interval (K)</th><th>ψ1</th></tr>");
        for (name, c) in &critical {
            let _ = writeln!(
                b,
                "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{} ± {:.2} K</td><td class=\"num\">{}–{}</td><td class=\"num\">{}</td></tr>",
                escape(name),
                c.fractions,
                k_and_c(Some(c.theta_k)),
                c.se_k,
                opt(c.ci_low_k, 2),
                opt(c.ci_high_k, 2),
                escape(&plus_minus(c.psi1, c.psi1_se))
            );
        }
        let _ = writeln!(b, "</table></div>");
        if let Some((_, c)) = critical.first() {
            let _ = writeln!(b, "<p>{}</p>", escape(&c.note));
        }
        let _ = writeln!(b, "</section>");
    }

    let _ = writeln!(b, "<section id=\"models\">\n<h2>Across-temperature models</h2>");
    for s in &report.series {
        let Some(t) = &s.theta else { continue };
        let _ = writeln!(b, "<h3>{}</h3>\n<div class=\"scroll\"><table>", escape(&s.name));
        let _ = writeln!(b, "<tr><th>model</th><th>θ</th><th>SE (K)</th><th>note</th></tr>");
        for m in &t.models {
            let _ = writeln!(
                b,
                "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td></tr>",
                escape(m.name.label()),
                k_and_c(m.theta_k),
                opt(m.se_k, 2),
                escape(m.note.as_deref().unwrap_or(""))
            );
        }
        if let Some(bs) = &t.bootstrap {
            let _ = writeln!(
                b,
                "<tr><td>bootstrap ({} of {} replicates, seed {})</td><td class=\"num\">{}–{} K</td><td class=\"num\">{}</td><td>percentile interval, cross-check</td></tr>",
                bs.successful,
                bs.replicates,
                bs.seed,
                opt(bs.ci_low_k, 2),
                opt(bs.ci_high_k, 2),
                opt(bs.se_k, 2)
            );
        }
        let _ = writeln!(b, "</table></div>");
        if let Some(m) = &t.mn_consistency {
            let _ = writeln!(
                b,
                "<p>Mn across temperatures: {} g/mol, χ² = {:.1} on {} dof, p = {:.2}{}</p>",
                escape(&plus_minus(m.mean_mn_g_per_mol, m.mean_mn_se_g_per_mol)),
                m.chi2,
                m.dof,
                m.p_value,
                if m.drift { " — drift" } else { "" }
            );
        }
    }
    let _ = writeln!(b, "</section>");

    let _ = writeln!(b, "<section id=\"flory\">\n<h2>Flory parameters</h2>");
    let mut any = false;
    for s in &report.series {
        let Some(f) = s.theta.as_ref().and_then(|t| t.flory.as_ref()) else { continue };
        any = true;
        let _ = writeln!(
            b,
            "<h3>{}</h3>\n<p>ψ1 = κ1(θ) = {}</p>\n<div class=\"scroll\"><table>",
            escape(&s.name),
            escape(&plus_minus(f.psi1, f.psi1_se))
        );
        let _ = writeln!(b, "<tr><th>T (K)</th><th>κ1</th><th>χ (model)</th><th>χ (this temperature)</th></tr>");
        for at in &f.temperatures {
            let _ = writeln!(
                b,
                "<tr><td class=\"num\">{:.2}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                at.temperature_k,
                escape(&plus_minus(at.kappa1, at.kappa1_se)),
                escape(&plus_minus(at.chi_model, at.chi_model_se)),
                escape(&plus_minus(at.chi_measured, at.chi_measured_se.unwrap_or(f64::NAN)))
            );
        }
        let _ = writeln!(b, "</table></div>");
    }
    if !any {
        let _ = writeln!(b, "<p>Not computed: give the polymer's specific volume and the solvent's molar volume.</p>");
    }
    let _ = writeln!(b, "</section>");

    if !report.routes.is_empty() {
        let _ = writeln!(b, "<section id=\"routes\">\n<h2>Routes compared</h2>");
        for r in &report.routes {
            let _ = writeln!(b, "<h3>{}</h3>\n<div class=\"scroll\"><table>", escape(&r.series));
            let _ = writeln!(b, "<tr><th>route</th><th>θ</th><th>SE (K)</th><th>interval (K)</th></tr>");
            for t in &r.routes {
                let _ = writeln!(
                    b,
                    "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{:.2}</td><td class=\"num\">{}–{}</td></tr>",
                    escape(t.route.name()),
                    k_and_c(Some(t.theta_k)),
                    t.se_k,
                    opt(t.ci_low_k, 2),
                    opt(t.ci_high_k, 2)
                );
            }
            let _ = writeln!(
                b,
                "</table></div>\n<p{}>combined (inverse variance): {} ± {:.2} K; χ² = {:.2}, p = {:.3}{}</p>",
                if r.disagree { " class=\"warn\"" } else { "" },
                k_and_c(Some(r.combined_theta_k)),
                r.combined_se_k,
                r.chi2,
                r.p_value,
                if r.disagree { " — the routes disagree" } else { "" }
            );
        }
        let _ = writeln!(b, "</section>");
    }
    provenance(&mut b, &report.tool_version, &report.inputs, &settings_table(&report.settings), date);
    page("θ temperature report", &b)
}

/// The HTML report of `thetaseek plan`, with its figure and the safety cautions.
pub fn plan_html(report: &PlanReport, figure: Option<&str>, date: &str) -> String {
    let plan = &report.plan;
    let mut b = String::new();
    let _ = writeln!(b, "<header>\n<h1>Study plan: solvent and temperature</h1>\n</header>");
    let _ = writeln!(b, "<section id=\"answer\">\n<h2>Answer</h2>");
    match &plan.recommendation {
        Some(r) => {
            let _ = writeln!(
                b,
                "<div class=\"card\"><div class=\"theta\">{} at {:.1} °C</div><div>hold {:.1}–{:.1} °C</div>",
                escape(&r.solvent),
                r.temperature_c,
                r.temperature_window_c[0],
                r.temperature_window_c[1]
            );
            for reason in &r.reasons {
                let _ = writeln!(b, "<div>{}</div>", escape(reason));
            }
            let _ = writeln!(b, "</div>");
        }
        None => {
            let _ = writeln!(
                b,
                "<div class=\"card\"><div class=\"theta\">no recommendation</div><div>{}</div></div>",
                escape(plan.no_recommendation_reason.as_deref().unwrap_or(""))
            );
        }
    }
    let _ = writeln!(b, "</section>");
    let _ = writeln!(b, "<section id=\"cautions\" class=\"cautions\">\n<h2>Safety cautions</h2>\n<ul>");
    for c in &plan.cautions {
        let _ = writeln!(b, "<li>{}</li>", escape(c));
    }
    let _ = writeln!(b, "</ul>\n</section>");
    let _ = writeln!(b, "<section id=\"figures\">\n<h2>Figure</h2>");
    if let Some(svg) = figure {
        let _ = writeln!(b, "<figure>\n{}\n<figcaption>every solvent's A2(T), θ intervals, thermostat and liquid ranges</figcaption>\n</figure>", inline_svg(svg));
    }
    let _ = writeln!(b, "</section>");
    let _ = writeln!(b, "<section id=\"ranking\">\n<h2>Ranking</h2>\n<div class=\"scroll\"><table>");
    let _ = writeln!(b, "<tr><th>#</th><th>solvent</th><th>θ</th><th>verdict</th><th>reasons</th></tr>");
    for c in &plan.candidates {
        let mut reasons: Vec<String> = c.reasons.iter().map(|r| escape(r)).collect();
        reasons.extend(c.warnings.iter().map(|w| format!("<span class=\"warn\">⚠ {}</span>", escape(w))));
        reasons.extend(c.unchecked.iter().map(|u| format!("not checked: {}", escape(u))));
        let _ = writeln!(
            b,
            "<tr><td>{}</td><td>{}</td><td class=\"num\">{}</td><td>{}</td><td>{}</td></tr>",
            c.rank,
            escape(&c.solvent),
            k_and_c(c.theta_k),
            if c.suitable { "suitable" } else { "ruled out" },
            reasons.join("<br />")
        );
    }
    let _ = writeln!(b, "</table></div>\n</section>");
    provenance(&mut b, &report.tool_version, &report.inputs, &settings_table(&report.settings), date);
    page("Study plan", &b)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_and_escapes_are_right() {
        assert_eq!(utc_date(0), "1970-01-01");
        // Days from 1970-01-01 to 2026-12-01: 20 788 (Python's datetime.date gives the same).
        assert_eq!(utc_date(20_788 * 86_400), "2026-12-01");
        assert_eq!(utc_date(20_788 * 86_400 - 1), "2026-11-30");
        assert_eq!(utc_date(951_782_400), "2000-02-29");
        assert_eq!(escape("<script>&\"'"), "&lt;script&gt;&amp;&quot;&#39;");
    }
}
