//! Figures rendered to strings and parsed as XML: panels, axis labels with units, the θ marker,
//! finite coordinates, escaped text; and the edge cases a lab file produces.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use thetaseek::analysis::{analyze, Settings};
use thetaseek::dataset::{Dataset, Measurement};
use thetaseek::plot::figures_for_report;
use thetaseek::report::{Report, ReportSettings};
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::thermo::flory_krigbaum_a2;
use thetaseek::theta::ThetaSettings;

fn readings(name: &str, temps: &[f64], theta: f64, concentrations: &[f64], rng: &mut ChaCha8Rng) -> Vec<Measurement> {
    let mut rows = Vec::new();
    for &t in temps {
        let truth =
            VirialTruth::with_good_solvent_curvature(t, 150.0, flory_krigbaum_a2(t, theta, 0.4, 0.9e-3, 100e-6));
        for (c, p, _) in simulate(&truth, concentrations, Noise { absolute_pa: 0.3, relative: 0.003 }, rng) {
            rows.push(Measurement::simulated(name, t, c, p));
        }
    }
    rows
}

const C: [f64; 5] = [2.0, 4.0, 6.0, 8.0, 10.0];

fn report_of(rows: &[Measurement]) -> Report {
    let dataset = Dataset::new(rows.into(), &[], &[], Default::default(), &[], &[]);
    let settings = Settings {
        theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
        ..Settings::default()
    };
    let results = analyze(&dataset, &settings);
    Report::new(Vec::new(), ReportSettings::new(thetaseek::virial::FormChoice::Auto), Vec::new(), &results, &dataset)
}

/// Every text of an SVG document, after checking it parses and has only finite coordinates.
fn texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).expect("the SVG is well-formed XML");
    for node in doc.descendants() {
        for attr in node.attributes() {
            let v = attr.value();
            assert!(!v.contains("NaN") && !v.contains("inf"), "non-finite coordinate in {}=\"{v}\"", attr.name());
        }
    }
    // Text stays text in the generic sans-serif family: it renders with no font files, in any browser.
    for n in doc.descendants().filter(|n| n.has_tag_name("text")) {
        assert_eq!(n.attribute("font-family"), Some("sans-serif"), "{:?}", n.text());
    }
    doc.descendants().filter(|n| n.has_tag_name("text")).map(|n| n.text().unwrap_or("").trim().to_string()).collect()
}

fn figure<'a>(figures: &'a [thetaseek::plot::Figure], name: &str) -> &'a str {
    &figures.iter().find(|f| f.file_name == name).unwrap_or_else(|| panic!("no {name}")).svg
}

#[test]
fn a_two_series_report_gives_every_figure_with_units_panels_and_theta() {
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let temps = [293.15, 298.15, 303.15, 308.15, 313.15, 318.15];
    let mut rows = readings("Resin A in solvent 1", &temps, 305.0, &C, &mut rng);
    rows.extend(readings("Resin A in solvent 2", &temps, 298.0, &C, &mut rng));
    let figures = figures_for_report(&report_of(&rows)).unwrap();
    let names: Vec<&str> = figures.iter().map(|f| f.file_name.as_str()).collect();
    for kind in ["a2-temperature", "reduced-pressure", "mn-temperature", "residuals"] {
        assert!(names.contains(&format!("resin-a-in-solvent-1-{kind}.svg").as_str()), "{names:?}");
    }
    assert!(names.contains(&"all-series-a2-temperature.svg"));

    let a2 = texts(figure(&figures, "resin-a-in-solvent-1-a2-temperature.svg"));
    for label in ["T (K)", "t (°C)", "A2 (10⁻⁴ mol mL/g²)", "θ"] {
        assert!(a2.iter().any(|t| t == label), "missing '{label}' in {a2:?}");
    }
    assert!(a2.iter().any(|t| t.starts_with("θ = ") && t.contains(" K (")), "θ legend in {a2:?}");

    let panels = texts(figure(&figures, "resin-a-in-solvent-1-reduced-pressure.svg"));
    assert_eq!(panels.iter().filter(|t| t.contains(" K) · ") && t.contains("A2 = ")).count(), temps.len());
    assert!(panels.iter().any(|t| t == "c (g/L)"));
    assert!(panels.iter().any(|t| t.starts_with("Π/(cRT) (10") && t.ends_with("mol/g)")), "{panels:?}");
    // Panels run in temperature order, top to bottom.
    let order: Vec<&String> = panels.iter().filter(|t| t.contains(" K) · ")).collect();
    assert!(order[0].starts_with("20.0 °C") && order[5].starts_with("45.0 °C"), "{order:?}");
    // Solvent quality is named, so the sign of the slope is read, not guessed.
    assert!(order[0].contains("poor solvent") && order[5].contains("good solvent"));

    let residuals = texts(figure(&figures, "resin-a-in-solvent-1-residuals.svg"));
    assert_eq!(residuals.iter().filter(|t| t.contains(" K) · ") && t.contains("dof")).count(), temps.len());
    let mn = texts(figure(&figures, "resin-a-in-solvent-1-mn-temperature.svg"));
    assert!(mn.iter().any(|t| t == "Mn (kg/mol)") && mn.iter().any(|t| t.starts_with("weighted mean")));
}

#[test]
fn an_extrapolated_theta_is_drawn_inside_the_chart() {
    let mut rng = ChaCha8Rng::seed_from_u64(2);
    let rows = readings("far", &[310.0, 316.0, 322.0, 328.0, 334.0], 300.0, &C, &mut rng);
    let figures = figures_for_report(&report_of(&rows)).unwrap();
    let a2 = texts(figure(&figures, "far-a2-temperature.svg"));
    assert!(a2.iter().any(|t| t.starts_with("θ = ") && t.contains("extrapolated")), "{a2:?}");
}

#[test]
fn a_series_without_theta_and_one_with_a_refused_temperature_still_draw() {
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    // A single temperature: no θ, but its fit figures exist.
    let mut rows = readings("single", &[300.0], 305.0, &C, &mut rng);
    // A temperature with two concentrations only is refused; the rest is drawn.
    rows.extend(readings("gappy", &[295.0, 305.0, 315.0], 305.0, &C, &mut rng));
    rows.extend(readings("gappy", &[325.0], 305.0, &C[..2], &mut rng));
    // No trend at all: flat A2.
    for t in [290.0, 300.0, 310.0, 320.0] {
        let truth = VirialTruth { temperature_k: t, mn_kg_per_mol: 150.0, a2: 1e-4, a3: 0.0 };
        for (c, p, _) in simulate(&truth, &C, Noise { absolute_pa: 0.3, relative: 0.003 }, &mut rng) {
            rows.push(Measurement::simulated("flat <b>&</b>", t, c, p));
        }
    }
    let report = report_of(&rows);
    let figures = figures_for_report(&report).unwrap();
    for f in &figures {
        texts(&f.svg);
    }
    let names: Vec<&str> = figures.iter().map(|f| f.file_name.as_str()).collect();
    assert!(
        names.contains(&"single-reduced-pressure.svg") && names.contains(&"single-a2-temperature.svg"),
        "{names:?}"
    );
    let gappy = texts(figure(&figures, "gappy-reduced-pressure.svg"));
    assert_eq!(gappy.iter().filter(|t| t.contains(" K) · ")).count(), 3);
    // The hostile name is text in the SVG, not markup.
    let flat = texts(figure(&figures, "flat-b-b-a2-temperature.svg"));
    assert!(flat.iter().any(|t| t.contains("flat <b>&</b>")), "{flat:?}");
    assert!(!flat.iter().any(|t| t.starts_with("θ = ")));
}

/// The PNG's width and height from its IHDR chunk, and its pHYs pixels per metre (x).
fn png_facts(png: &[u8]) -> (u32, u32, Option<u32>) {
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n", "a PNG signature");
    let be = |at: usize| u32::from_be_bytes(png[at..at + 4].try_into().unwrap());
    let phys = png.windows(4).position(|w| w == b"pHYs").map(|at| be(at + 4));
    (be(16), be(20), phys)
}

/// `--figure-format svg,png,pdf` writes every figure three times from one drawing: the PNG at
/// 300 dpi of the SVG's size (1 px = 1/96 in, the CSS pixel) with its resolution recorded, the
/// PDF one page of the same size in points with the shipped font embedded (its text is
/// extractable: checked with pypdf for the closing note; here the font's presence).
#[test]
fn figures_come_as_svg_png_and_pdf_from_one_drawing() {
    let dir = tempfile::tempdir().unwrap();
    let figures = dir.path().join("fig");
    let out = crate::common::thetaseek()
        .arg("analyze")
        .arg(crate::common::demo())
        .args(["--quiet", "--figure-format", "svg,png,pdf", "--figures"])
        .arg(&figures)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let stem = figures.join("px-40-in-mirane-a2-temperature");
    let svg = std::fs::read_to_string(stem.with_extension("svg")).unwrap();
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let width: f64 = doc.root_element().attribute("width").unwrap().parse().unwrap();
    let height: f64 = doc.root_element().attribute("height").unwrap().parse().unwrap();
    let (w, h, phys) = png_facts(&std::fs::read(stem.with_extension("png")).unwrap());
    assert_eq!((w, h), ((width * 300.0 / 96.0).round() as u32, (height * 300.0 / 96.0).round() as u32));
    // 300 dpi = 11 811 pixels per metre (300 / 0.0254).
    assert_eq!(phys, Some(11_811));
    let pdf = std::fs::read(stem.with_extension("pdf")).unwrap();
    assert!(pdf.starts_with(b"%PDF-"));
    let text = String::from_utf8_lossy(&pdf);
    assert!(text.contains("/Count 1") && text.matches("/Type /Pages").count() == 1, "one page");
    let media = format!("{} {}", width * 72.0 / 96.0, height * 72.0 / 96.0);
    assert!(text.contains(&format!("/MediaBox [0 0 {media}]")), "page of {media} pt");
    assert!(text.contains("DejaVuSans"), "the shipped font is embedded (text drawn)");
    let count = |ext: &str| {
        std::fs::read_dir(&figures)
            .unwrap()
            .filter(|e| e.as_ref().unwrap().path().extension().is_some_and(|x| x == ext))
            .count()
    };
    assert!(count("svg") > 4 && count("svg") == count("png") && count("png") == count("pdf"));
}

/// Text survives the conversions: a PNG of a figure with only a word in it is not blank (with no
/// font loaded the renderer would drop the text silently).
#[test]
fn png_text_is_drawn_with_the_shipped_font() {
    let svg = r#"<svg xmlns="http://www.w3.org/2000/svg" width="120" height="40"><text x="4" y="30" font-family="sans-serif" font-size="24">θ A2</text></svg>"#;
    let png = thetaseek::plot::to_png(svg).unwrap();
    let blank =
        thetaseek::plot::to_png(r#"<svg xmlns="http://www.w3.org/2000/svg" width="120" height="40"></svg>"#).unwrap();
    assert_ne!(png.len(), blank.len(), "the word was drawn");
}

/// `plan --figure` and `next --figure` take the format from the path: `.png`, `.pdf`, else SVG.
#[test]
fn plan_and_next_figures_follow_their_extension() {
    let dir = tempfile::tempdir().unwrap();
    let (png, pdf) = (dir.path().join("plan.png"), dir.path().join("next.pdf"));
    let solvents = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-solvents.csv");
    let status = crate::common::thetaseek()
        .args(["plan", "--quiet", "--molar-mass", "185000", "--solvents"])
        .arg(&solvents)
        .arg("--figure")
        .arg(&png)
        .arg(crate::common::demo())
        .output()
        .unwrap();
    assert!(status.status.success(), "{}", String::from_utf8_lossy(&status.stderr));
    assert_eq!(png_facts(&std::fs::read(&png).unwrap()).2, Some(11_811));
    let status = crate::common::thetaseek()
        .args(["next", "--quiet", "--figure"])
        .arg(&pdf)
        .arg(crate::common::demo())
        .output()
        .unwrap();
    assert!(status.status.success(), "{}", String::from_utf8_lossy(&status.stderr));
    assert!(std::fs::read(&pdf).unwrap().starts_with(b"%PDF-"));
}

/// Every point of the elements drawn before an A2(T) figure's legend box (readings, error bars,
/// the fitted line and its band, θ, its interval and its label), in pixels; grid lines (drawn
/// faint) and the axes (on the plot's edge) left out. Returns the legend box and the points.
/// A box in pixels: left, top, right, bottom.
type PixelBox = (f64, f64, f64, f64);

fn legend_and_drawn(svg: &str) -> (PixelBox, Vec<(f64, f64)>) {
    let doc = roxmltree::Document::parse(svg).unwrap();
    let nodes: Vec<roxmltree::Node> = doc.descendants().filter(|n| n.is_element()).collect();
    let at = nodes
        .iter()
        .position(|n| n.has_tag_name("rect") && n.attribute("opacity") == Some("0.85"))
        .expect("a legend box");
    let num = |n: &roxmltree::Node, a: &str| n.attribute(a).unwrap().parse::<f64>().unwrap();
    let legend = &nodes[at];
    let (x, y) = (num(legend, "x"), num(legend, "y"));
    let boxed = (x, y, x + num(legend, "width"), y + num(legend, "height"));
    let mut points = Vec::new();
    for n in &nodes[..at] {
        let faint = n.attribute("opacity").and_then(|o| o.parse::<f64>().ok()).is_some_and(|o| o < 0.1);
        let axis = n.attribute("stroke") == Some("#000000");
        if faint || axis {
            continue;
        }
        match n.tag_name().name() {
            "polyline" | "polygon" => {
                for pair in n.attribute("points").unwrap_or("").split_whitespace() {
                    let (a, b) = pair.split_once(',').unwrap();
                    points.push((a.parse().unwrap(), b.parse().unwrap()));
                }
            }
            "circle" => points.push((num(n, "cx"), num(n, "cy"))),
            "rect" => {
                // The θ interval: its corners and the points along its left and right edges.
                let (x0, y0) = (num(n, "x"), num(n, "y"));
                let (x1, y1) = (x0 + num(n, "width"), y0 + num(n, "height"));
                for k in 0..=40 {
                    let yk = y0 + (y1 - y0) * k as f64 / 40.0;
                    points.extend([(x0, yk), (x1, yk), ((x0 + x1) / 2.0, yk)]);
                }
            }
            "text" if n.text().is_some_and(|t| t.trim() == "θ") => points.push((num(n, "x"), num(n, "y"))),
            _ => {}
        }
    }
    (boxed, points)
}

/// Issue #26: the legend never covers a reading, the fitted line, θ or its interval. Checked on
/// the drawn SVG, against every element drawn before the legend, for the demo's two A2(T)
/// figures (the ostrol one used to hide θ), for θ at the edge of the range and LCST series, and
/// for the `next` figure (its "today" lines used to run through the legend).
#[test]
fn legends_cover_no_drawn_element() {
    let mut svgs: Vec<(String, String)> = Vec::new();
    let dir = tempfile::tempdir().unwrap();
    let out = crate::common::thetaseek()
        .arg("analyze")
        .arg(crate::common::demo())
        .args(["--quiet", "--figures"])
        .arg(dir.path())
        .output()
        .unwrap();
    assert!(out.status.success());
    for name in ["px-40-in-mirane-a2-temperature.svg", "px-40-in-ostrol-a2-temperature.svg"] {
        svgs.push((name.into(), std::fs::read_to_string(dir.path().join(name)).unwrap()));
    }
    let mut rng = ChaCha8Rng::seed_from_u64(26);
    // θ at the low edge, at the high edge, and LCST-type (A2 falls as T rises: ψ1 < 0 by θ above).
    let cases: [(&str, f64, &[f64]); 3] = [
        ("low edge", 291.0, &[290.0, 295.0, 300.0, 305.0, 310.0, 315.0]),
        ("high edge", 314.0, &[290.0, 295.0, 300.0, 305.0, 310.0, 315.0]),
        ("wide", 302.0, &[280.0, 300.0, 320.0]),
    ];
    for (name, theta, temps) in cases {
        let report = report_of(&readings(name, temps, theta, &C, &mut rng));
        for f in
            figures_for_report(&report).unwrap().into_iter().filter(|f| f.file_name.ends_with("a2-temperature.svg"))
        {
            svgs.push((format!("{name}: {}", f.file_name), f.svg));
        }
    }
    let lcst: Vec<Measurement> = [280.0, 290.0, 300.0, 310.0, 320.0]
        .iter()
        .flat_map(|&t| {
            let a2 = -flory_krigbaum_a2(t, 300.0, 0.4, 0.9e-3, 100e-6);
            let truth = VirialTruth::with_good_solvent_curvature(t, 150.0, a2);
            simulate(&truth, &C, Noise { absolute_pa: 0.3, relative: 0.003 }, &mut rng)
                .into_iter()
                .map(move |(c, p, _)| Measurement::simulated("lcst", t, c, p))
        })
        .collect();
    for f in figures_for_report(&report_of(&lcst))
        .unwrap()
        .into_iter()
        .filter(|f| f.file_name.ends_with("a2-temperature.svg"))
    {
        svgs.push((format!("LCST: {}", f.file_name), f.svg));
    }
    // The `next` figure, whose lines of today's widths cross the whole chart.
    let next = dir.path().join("next.svg");
    let out = crate::common::thetaseek()
        .args(["next", "--quiet", "--figure"])
        .arg(&next)
        .arg(crate::common::demo())
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    svgs.push(("next".into(), std::fs::read_to_string(&next).unwrap()));
    assert!(svgs.len() >= 7);
    for (name, svg) in &svgs {
        let ((x0, y0, x1, y1), points) = legend_and_drawn(svg);
        let inside: Vec<&(f64, f64)> =
            points.iter().filter(|(x, y)| *x > x0 && *x < x1 && *y > y0 && *y < y1).collect();
        assert!(inside.is_empty(), "{name}: the legend ({x0},{y0})–({x1},{y1}) covers {inside:?}");
    }
}
