//! Figures for a report, drawn with plotters onto a drawing area they are given; nothing here
//! opens a path. [`figures_for_report`] renders every figure of a report to SVG strings.
//!
//! Colours are the Okabe–Ito colour-blind-safe set (Okabe & Ito 2008, "Color Universal
//! Design"); series are also told apart by marker shape, and extrapolated lines are dashed.

mod a2_temperature;
mod export;
mod format;
mod mn;
mod next;
mod panels;
mod plan;
mod viscometry;
mod zimm;

pub use a2_temperature::{draw_a2_overlay, draw_a2_temperature};
pub use export::{to_pdf, to_png, FigureFormat, PNG_DPI};
pub use format::{axis, power_of_ten, superscript, tick};
pub use mn::draw_mn;
pub use next::draw_next;
pub use panels::{draw_reduced_pressure, draw_residuals};
pub use plan::draw_plan;
pub use viscometry::{draw_dilution, draw_mark_houwink, draw_stockmayer_fixman};
pub use zimm::draw_zimm;

use crate::report::{Report, SeriesReport};
use crate::units::kelvin_to_celsius;
use plotters::coord::types::RangedCoordf64;
use plotters::element::{Drawable, PointCollection};
use plotters::prelude::*;
use plotters_backend::DrawingErrorKind;
use std::collections::HashMap;

/// A figure that could not be drawn.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("figure: {0}")]
pub struct FigureError(pub String);

impl<E: std::error::Error + Send + Sync> From<DrawingAreaErrorKind<E>> for FigureError {
    fn from(e: DrawingAreaErrorKind<E>) -> Self {
        FigureError(e.to_string())
    }
}

/// Okabe–Ito: blue, vermillion, bluish green, reddish purple, orange, sky blue, yellow.
pub const PALETTE: [RGBColor; 7] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
    RGBColor(240, 228, 66),
];

/// Text and axes.
pub const INK: RGBColor = RGBColor(40, 40, 40);

/// Our text: the generic sans-serif family in ink, `size` px.
pub fn ink_text(size: u32) -> TextStyle<'static> {
    ("sans-serif", size).into_font().color(&INK)
}
/// Neutral grey for "near θ" and bands.
pub const GREY: RGBColor = RGBColor(120, 120, 120);

/// Colour of the i-th series.
pub fn series_colour(i: usize) -> RGBColor {
    PALETTE[i % PALETTE.len()]
}

/// Marker shapes, in the order series get them.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Marker {
    /// Filled circle.
    Circle,
    /// Filled triangle.
    Triangle,
    /// Filled square.
    Square,
    /// Diagonal cross.
    Cross,
}

/// Marker of the i-th series.
pub fn series_marker(i: usize) -> Marker {
    [Marker::Circle, Marker::Triangle, Marker::Square, Marker::Cross][i % 4]
}

/// One marker at a point of a chart: a plotters element of its own, so that every shape has
/// one type and can be drawn on any backend.
#[derive(Debug, Clone)]
pub struct MarkerElement<C> {
    at: C,
    marker: Marker,
    size: i32,
    colour: RGBColor,
}

/// A marker of `size` px (half-width) at `at`.
pub fn marker_element<C>(marker: Marker, at: C, size: i32, colour: RGBColor) -> MarkerElement<C> {
    MarkerElement { at, marker, size, colour }
}

impl<'a, C: 'a> PointCollection<'a, C> for &'a MarkerElement<C> {
    type Point = &'a C;
    type IntoIter = std::iter::Once<&'a C>;
    fn point_iter(self) -> Self::IntoIter {
        std::iter::once(&self.at)
    }
}

impl<C, DB: DrawingBackend> Drawable<DB> for MarkerElement<C> {
    fn draw<I: Iterator<Item = (i32, i32)>>(
        &self,
        mut points: I,
        backend: &mut DB,
        _: (u32, u32),
    ) -> Result<(), DrawingErrorKind<DB::ErrorType>> {
        let Some((x, y)) = points.next() else { return Ok(()) };
        let s = self.size;
        let fill = self.colour.filled();
        match self.marker {
            Marker::Circle => backend.draw_circle((x, y), s as u32, &fill, true),
            Marker::Triangle => backend.fill_polygon([(x, y - s - 1), (x + s + 1, y + s), (x - s - 1, y + s)], &fill),
            Marker::Square => backend.draw_rect((x - s, y - s), (x + s, y + s), &fill, true),
            Marker::Cross => {
                let line = self.colour.stroke_width(2);
                backend.draw_line((x - s, y - s), (x + s, y + s), &line)?;
                backend.draw_line((x - s, y + s), (x + s, y - s), &line)
            }
        }
    }
}

/// A chart in f64 coordinates on an SVG backend.
pub type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// A chart with T (K) on the bottom axis and t (°C) on the top one.
pub type TemperatureChart<'a, 'b> = plotters::chart::DualCoordChartContext<
    'a,
    SVGBackend<'b>,
    Cartesian2d<RangedCoordf64, RangedCoordf64>,
    Cartesian2d<RangedCoordf64, RangedCoordf64>,
>;

/// Builds a temperature chart over T ∈ `x` (K) and `y`, both made drawable by [`axis`], with
/// our mesh, tick labels and the °C axis on top.
pub fn temperature_chart<'a, 'b>(
    root: &'a DrawingArea<SVGBackend<'b>, plotters::coord::Shift>,
    caption: &str,
    x: (f64, f64),
    y: (f64, f64),
    y_desc: &str,
) -> Result<TemperatureChart<'a, 'b>, FigureError> {
    let (x_lo, x_hi) = axis(x.0, x.1);
    let (y_lo, y_hi) = axis(y.0, y.1);
    let mut chart = ChartBuilder::on(root)
        .caption(caption, ink_text(22))
        .margin(16)
        .x_label_area_size(48)
        .top_x_label_area_size(44)
        .y_label_area_size(80)
        .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)?
        .set_secondary_coord(kelvin_to_celsius(x_lo)..kelvin_to_celsius(x_hi), y_lo..y_hi);
    chart
        .configure_mesh()
        .light_line_style(WHITE.mix(0.0))
        .bold_line_style(INK.mix(0.08))
        .x_desc("T (K)")
        .y_desc(y_desc)
        .x_label_formatter(&|v| tick(*v, x_hi - x_lo))
        .y_label_formatter(&|v| tick(*v, y_hi - y_lo))
        .axis_desc_style(ink_text(16))
        .label_style(ink_text(13))
        .draw()?;
    chart
        .configure_secondary_axes()
        .x_desc("t (°C)")
        .x_label_formatter(&|v| tick(*v, x_hi - x_lo))
        .axis_desc_style(ink_text(16))
        .label_style(ink_text(13))
        .draw()?;
    Ok(chart)
}

/// Builds a chart with one x and one y axis over `x` and `y` (made drawable by [`axis`]), with
/// our caption, mesh and tick labels.
pub fn plain_chart<'a, 'b>(
    root: &'a DrawingArea<SVGBackend<'b>, plotters::coord::Shift>,
    caption: &str,
    x: (f64, f64),
    y: (f64, f64),
    x_desc: &str,
    y_desc: &str,
) -> Result<Chart<'a, 'b>, FigureError> {
    let (x_lo, x_hi) = axis(x.0, x.1);
    let (y_lo, y_hi) = axis(y.0, y.1);
    let mut chart = ChartBuilder::on(root)
        .caption(caption, ink_text(22))
        .margin(16)
        .x_label_area_size(48)
        .y_label_area_size(80)
        .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)?;
    chart
        .configure_mesh()
        .light_line_style(WHITE.mix(0.0))
        .bold_line_style(INK.mix(0.08))
        .x_desc(x_desc)
        .y_desc(y_desc)
        .x_label_formatter(&|v| tick(*v, x_hi - x_lo))
        .y_label_formatter(&|v| tick(*v, y_hi - y_lo))
        .axis_desc_style(ink_text(16))
        .label_style(ink_text(13))
        .draw()?;
    Ok(chart)
}

/// Our legend: a light box at `position` with the series labels.
pub fn draw_legend<'a, 'b: 'a>(chart: &mut Chart<'a, 'b>, position: SeriesLabelPosition) -> Result<(), FigureError> {
    chart
        .configure_series_labels()
        .position(position)
        .background_style(WHITE.mix(0.85))
        .border_style(INK.mix(0.3))
        .label_font(ink_text(13))
        .draw()?;
    Ok(())
}

/// The corner for a legend of `entries` rows whose longest label has `chars` characters, that
/// covers none of `occupied` (pixel points of the data and fitted lines) and no `bands` (pixel x
/// ranges drawn the plot's full height: θ and its interval): `preferred` when it is free, else
/// the first free corner, else the one covering least; with what it still covers (0: free).
/// `area` is the plotting area in pixels.
pub fn legend_corner(
    area: (std::ops::Range<i32>, std::ops::Range<i32>),
    entries: usize,
    chars: usize,
    occupied: &[(i32, i32)],
    bands: &[(i32, i32)],
    preferred: SeriesLabelPosition,
) -> (SeriesLabelPosition, usize) {
    // The box plotters draws (measured on our figures: 19 px a row, 45 px + 6.6 px a
    // character), 5 px from the corner, with 8 px to spare around it.
    let (w, h) = (45 + (6.6 * chars as f64).ceil() as i32 + 16, 19 * entries as i32 + 18);
    let (x, y) = area;
    let corner_box = |c: &SeriesLabelPosition| {
        let left = matches!(c, SeriesLabelPosition::UpperLeft | SeriesLabelPosition::LowerLeft);
        let upper = matches!(c, SeriesLabelPosition::UpperLeft | SeriesLabelPosition::UpperRight);
        let x0 = if left { x.start } else { x.end - w };
        let y0 = if upper { y.start } else { y.end - h };
        (x0, y0, x0 + w, y0 + h)
    };
    let covered = |c: &SeriesLabelPosition| {
        let (x0, y0, x1, y1) = corner_box(c);
        let points = occupied.iter().filter(|(px, py)| (x0..=x1).contains(px) && (y0..=y1).contains(py)).count();
        let crossed = bands.iter().filter(|(a, b)| *a.min(b) <= x1 && *a.max(b) >= x0).count();
        points + 1000 * crossed
    };
    let corners = [
        SeriesLabelPosition::UpperLeft,
        SeriesLabelPosition::UpperRight,
        SeriesLabelPosition::LowerRight,
        SeriesLabelPosition::LowerLeft,
    ];
    if covered(&preferred) == 0 {
        return (preferred, 0);
    }
    let best = corners.into_iter().min_by_key(|c| covered(c)).unwrap_or(preferred);
    let left = covered(&best);
    (best, left)
}

/// Renders `draw` into an SVG document of `width`×`height` px.
pub fn render_svg(
    width: u32,
    height: u32,
    draw: impl FnOnce(&DrawingArea<SVGBackend, plotters::coord::Shift>) -> Result<(), FigureError>,
) -> Result<String, FigureError> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        root.fill(&WHITE)?;
        draw(&root)?;
        root.present()?;
    }
    Ok(svg)
}

/// A file-name-safe form of a series name: lower case, runs of other characters as `-`.
pub fn slug(name: &str) -> String {
    let mut out = String::new();
    for ch in name.chars().flat_map(char::to_lowercase) {
        if ch.is_ascii_alphanumeric() {
            out.push(ch);
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    let out = out.trim_end_matches('-').to_string();
    if out.is_empty() {
        "series".into()
    } else {
        out
    }
}

/// The file-name stem of the figures that show every series together.
const ALL_SERIES: &str = "all-series";

/// The longest slug kept whole in a file name, in bytes (file systems take 255).
const MAX_SLUG_BYTES: usize = 80;

/// The file-name stem of each series' figures, unique in the run and the same on every run of
/// the same names: the [`slug`], or where the slug would be shared (`x`, `X` and `x!`), is the
/// overlay's, or was shortened, the slug followed by the first eight hexadecimal digits of the
/// name's SHA-256.
pub fn file_bases<'a>(names: impl Iterator<Item = &'a str> + Clone) -> Vec<String> {
    let slugs: Vec<String> = names.clone().map(slug).collect();
    let mut count: HashMap<&str, usize> = HashMap::new();
    for s in &slugs {
        *count.entry(s.as_str()).or_default() += 1;
    }
    let bases: Vec<String> = names
        .zip(&slugs)
        .map(|(name, s)| {
            let shared = count[s.as_str()] > 1 || s == ALL_SERIES || s.len() > MAX_SLUG_BYTES;
            if !shared {
                return s.clone();
            }
            let digest = sha2::Digest::finalize(<sha2::Sha256 as sha2::Digest>::new_with_prefix(name.as_bytes()));
            let hex: String = digest[..4].iter().map(|b| format!("{b:02x}")).collect();
            let cut = s.char_indices().map(|(i, _)| i).take_while(|i| *i <= MAX_SLUG_BYTES).last().unwrap_or(0);
            let kept = if s.len() > MAX_SLUG_BYTES { s[..cut].trim_end_matches('-') } else { s.as_str() };
            format!("{kept}-{hex}")
        })
        .collect();
    // A name's digest that meets another's slug (vanishingly rare) falls back to positions.
    let mut seen = std::collections::HashSet::new();
    bases
        .into_iter()
        .enumerate()
        .map(|(i, b)| if seen.insert(b.clone()) { b } else { format!("{b}-{}", i + 1) })
        .collect()
}

/// One rendered figure and the file name it should have.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    /// File name (no folder).
    pub file_name: String,
    /// The SVG document.
    pub svg: String,
}

/// Every figure of a report: per series A2(T), reduced-pressure panels, Mn(T) and residuals
/// (the last three for osmometry series), Zimm plots (light-scattering series), Huggins and
/// Kraemer panels, Mark–Houwink lines with a(T), and the Stockmayer–Fixman plot (viscometry),
/// plus an overlay of all series when there are several.
pub fn figures_for_report(report: &Report) -> Result<Vec<Figure>, FigureError> {
    let mut figures = Vec::new();
    // A viscometry series draws figures of its own kinds: it may share its pair's name (and
    // file stem) with the osmometry series of the same pair.
    let viscometric = |s: &&SeriesReport| s.viscometry.is_some();
    let mut others = file_bases(report.series.iter().filter(|s| !viscometric(s)).map(|s| s.name.as_str())).into_iter();
    let mut viscometry = file_bases(report.series.iter().filter(viscometric).map(|s| s.name.as_str())).into_iter();
    let bases: Vec<String> = report
        .series
        .iter()
        .map(|s| if viscometric(&s) { viscometry.next() } else { others.next() }.unwrap_or_default())
        .collect();
    let analysed: Vec<(usize, &SeriesReport)> = report
        .series
        .iter()
        .enumerate()
        .filter(|(_, s)| s.theta.is_some() || !s.fits.is_empty() || s.viscometry.is_some())
        .collect();
    for (i, s) in &analysed {
        let base = &bases[*i];
        let mut push = |kind: &str, svg: String| figures.push(Figure { file_name: format!("{base}-{kind}.svg"), svg });
        if s.theta.as_ref().is_some_and(|t| !t.points.is_empty()) {
            push("a2-temperature", render_svg(900, 600, |root| draw_a2_temperature(root, s, *i))?);
        }
        if !s.fits.is_empty() {
            let h = panels::panel_height(s.fits.len());
            push("reduced-pressure", render_svg(900, h, |root| draw_reduced_pressure(root, s))?);
            push("mn-temperature", render_svg(900, 500, |root| draw_mn(root, s, *i))?);
            push("residuals", render_svg(900, h, |root| draw_residuals(root, s))?);
        }
        if !s.light_scattering.is_empty() {
            let h = zimm::zimm_height(s.light_scattering.len());
            push("zimm", render_svg(900, h, |root| draw_zimm(root, s))?);
        }
        if let Some(v) = &s.viscometry {
            let h = viscometry::dilution_height(v.temperatures.len());
            push("huggins-kraemer", render_svg(900, h, |root| draw_dilution(root, s))?);
            push("mark-houwink", render_svg(1100, 560, |root| draw_mark_houwink(root, s))?);
            push("stockmayer-fixman", render_svg(900, 600, |root| draw_stockmayer_fixman(root, s))?);
        }
    }
    let overlay: Vec<(usize, &SeriesReport)> =
        analysed.into_iter().filter(|(_, s)| s.theta.as_ref().is_some_and(|t| !t.points.is_empty())).collect();
    if overlay.len() > 1 {
        figures.push(Figure {
            file_name: format!("{ALL_SERIES}-a2-temperature.svg"),
            svg: render_svg(900, 600, |root| draw_a2_overlay(root, &overlay))?,
        });
    }
    Ok(figures)
}

/// Splits off a strip at the foot of a figure that recommends a temperature or a solvent, writes
/// `notes` (one line each) and the safety cautions in it, and returns the area above for the chart.
pub fn with_cautions<'a>(
    root: &DrawingArea<SVGBackend<'a>, plotters::coord::Shift>,
    notes: &[String],
) -> Result<DrawingArea<SVGBackend<'a>, plotters::coord::Shift>, FigureError> {
    let (_, height) = root.dim_in_pixel();
    let lines = notes.len() + 2;
    let (chart, strip) = root.split_vertically(height.saturating_sub(18 * lines as u32 + 14));
    let cautions = [
        "Safety: prepare and heat solutions in a fume hood; stay well below the boiling point; read each solvent's safety data sheet;",
        "follow your laboratory's and local rules and your safety officer's review.",
    ];
    for (i, line) in notes.iter().map(String::as_str).chain(cautions).enumerate() {
        strip.draw(&Text::new(line.to_string(), (16, 6 + 18 * i as i32), ink_text(13)))?;
    }
    Ok(chart)
}

#[cfg(test)]
mod tests {
    use super::slug;

    #[test]
    fn figure_file_names_are_unique_and_stable() {
        // Issue #28, item 7: `x 3`, `x` and `X` (and a series called "All series") wrote
        // figures to the same files; the HTML showed 13 figures while 9 reached the disk.
        let names = ["x 3", "x", "X", "All series", "y"];
        let bases = super::file_bases(names.iter().copied());
        let unique: std::collections::HashSet<&String> = bases.iter().collect();
        assert_eq!(unique.len(), names.len(), "{bases:?}");
        assert_eq!(bases[0], "x-3");
        assert_eq!(bases[4], "y");
        assert!(bases[1].starts_with("x-") && bases[3].starts_with("all-series-"), "{bases:?}");
        assert_eq!(bases, super::file_bases(names.iter().copied()));
        let long = "a".repeat(400);
        assert!(super::file_bases([long.as_str()].into_iter())[0].len() < 100);
    }

    #[test]
    fn slugs_are_safe_file_names() {
        assert_eq!(slug("PX-40 in mirane"), "px-40-in-mirane");
        assert_eq!(slug("<script>/../x"), "script-x");
        assert_eq!(slug("∅"), "series");
    }
}
