//! Small SVG charts drawn by hand: scatter and line series on linear or logarithmic axes, with
//! optional interval bars, real text for titles, axis labels and ticks, and marker shapes that
//! tell series apart without colour (the charts must read in grey scale). Every data point is a
//! `<g class="pt">` carrying its values in `data-x`/`data-y`, so tests can count them.

use std::fmt::Write as _;

const W: f64 = 560.0;
const H: f64 = 330.0;
const LEFT: f64 = 64.0;
const RIGHT: f64 = 16.0;
/// Top margin without a legend; each legend row adds `LEGEND_ROW`.
const TOP0: f64 = 40.0;
const LEGEND_ROW: f64 = 15.0;
const BOTTOM: f64 = 52.0;

/// One axis: its range, scale and label (with units).
#[derive(Debug, Clone)]
pub struct Axis {
    pub label: String,
    pub log: bool,
    pub lo: f64,
    pub hi: f64,
    /// Named ticks (for categories); empty = numeric ticks.
    pub names: Vec<(f64, String)>,
}

impl Axis {
    /// An axis spanning `values` (with a margin), logarithmic if `log` (values must be > 0).
    pub fn fit(label: &str, log: bool, values: impl IntoIterator<Item = f64>, zero: bool) -> Axis {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for v in values {
            if v.is_finite() && (!log || v > 0.0) {
                lo = lo.min(v);
                hi = hi.max(v);
            }
        }
        if !lo.is_finite() {
            (lo, hi) = if log { (1.0, 10.0) } else { (0.0, 1.0) };
        }
        if log {
            lo = 10f64.powf(lo.log10().floor());
            hi = 10f64.powf(hi.log10().ceil().max(lo.log10() + 1.0));
        } else {
            if zero {
                lo = lo.min(0.0);
            }
            if hi <= lo {
                hi = lo + 1.0;
            }
            let pad = (hi - lo) * 0.05;
            hi += pad;
            if !zero {
                lo -= pad;
            }
        }
        Axis {
            label: label.into(),
            log,
            lo,
            hi,
            names: Vec::new(),
        }
    }

    /// A categorical axis with `names` at 1, 2, …
    pub fn categories(label: &str, names: &[&str]) -> Axis {
        Axis {
            label: label.into(),
            log: false,
            lo: 0.5,
            hi: names.len() as f64 + 0.5,
            names: names
                .iter()
                .enumerate()
                .map(|(i, n)| (i as f64 + 1.0, n.to_string()))
                .collect(),
        }
    }

    fn frac(&self, v: f64) -> f64 {
        if self.log {
            (v.max(self.lo * 1e-3).log10() - self.lo.log10()) / (self.hi.log10() - self.lo.log10())
        } else {
            (v - self.lo) / (self.hi - self.lo)
        }
    }

    fn ticks(&self) -> Vec<f64> {
        if self.log {
            let (a, b) = (
                self.lo.log10().round() as i32,
                self.hi.log10().round() as i32,
            );
            let step = ((b - a) as f64 / 6.0).ceil().max(1.0) as i32;
            (a..=b)
                .step_by(step as usize)
                .map(|e| 10f64.powi(e))
                .collect()
        } else {
            let raw = (self.hi - self.lo) / 5.0;
            let mag = 10f64.powf(raw.log10().floor());
            let step = [1.0, 2.0, 5.0, 10.0]
                .iter()
                .map(|m| m * mag)
                .find(|s| *s >= raw)
                .unwrap_or(10.0 * mag);
            let mut t = (self.lo / step).ceil() * step;
            let mut out = Vec::new();
            while t <= self.hi + 1e-9 * step {
                out.push(if t.abs() < 1e-12 * step { 0.0 } else { t });
                t += step;
            }
            out
        }
    }
}

/// How a series is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mark {
    Circle,
    Square,
    Diamond,
    Triangle,
}

/// A data point with an optional interval on y.
#[derive(Debug, Clone, Copy)]
pub struct Point {
    pub x: f64,
    pub y: f64,
    pub interval: Option<(f64, f64)>,
}

#[derive(Debug, Clone)]
pub struct Series {
    pub name: String,
    pub mark: Mark,
    /// Join the points with a line.
    pub line: bool,
    pub points: Vec<Point>,
}

/// A reference line across the plot at y = value, labelled.
#[derive(Debug, Clone)]
pub struct Guide {
    pub y: f64,
    pub label: String,
    /// Put the label at the left end (to keep close guides' labels apart).
    pub at_left: bool,
}

pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Tick text: compact, exact for powers of ten.
fn tick_text(v: f64, log: bool) -> String {
    if log {
        let e = v.log10().round() as i32;
        return match e {
            0 => "1".into(),
            1 => "10".into(),
            2 => "100".into(),
            3 => "1000".into(),
            _ => format!("1e{e}"),
        };
    }
    if v == 0.0 {
        return "0".into();
    }
    let a = v.abs();
    if v.fract() == 0.0 && a < 1e12 {
        format!("{v:.0}")
    } else if (1e-4..1e12).contains(&a) {
        let s = format!("{v:.6}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        format!("{v:.2e}")
    }
}

fn marker(out: &mut String, mark: Mark, x: f64, y: f64) {
    let _ = match mark {
        Mark::Circle => write!(out, r#"<circle cx="{x:.1}" cy="{y:.1}" r="3.6"/>"#),
        Mark::Square => write!(
            out,
            r#"<rect x="{:.1}" y="{:.1}" width="7" height="7"/>"#,
            x - 3.5,
            y - 3.5
        ),
        Mark::Diamond => write!(
            out,
            r#"<path d="M{x:.1} {:.1}L{:.1} {y:.1}L{x:.1} {:.1}L{:.1} {y:.1}Z"/>"#,
            y - 4.5,
            x + 4.5,
            y + 4.5,
            x - 4.5
        ),
        Mark::Triangle => write!(
            out,
            r#"<path d="M{x:.1} {:.1}L{:.1} {:.1}L{:.1} {:.1}Z"/>"#,
            y - 4.5,
            x + 4.5,
            y + 3.5,
            x - 4.5,
            y + 3.5
        ),
    };
}

/// A chart as an inline `<svg>` with `id`, a title and a description for screen readers.
pub fn chart(
    id: &str,
    title: &str,
    description: &str,
    x: &Axis,
    y: &Axis,
    series: &[Series],
    guides: &[Guide],
) -> String {
    // The legend gets rows of its own above the plot, so it never hides a point.
    let legend_rows = if series.len() > 1 { series.len() } else { 0 };
    let top = TOP0 + LEGEND_ROW * legend_rows as f64;
    let h = H + LEGEND_ROW * legend_rows as f64;
    let plot = Plot {
        top,
        h,
        pw: W - LEFT - RIGHT,
        ph: h - top - BOTTOM,
        x,
        y,
    };
    let mut out = String::new();
    let _ = write!(
        out,
        r#"<svg class="chart" id="{id}" viewBox="0 0 {W} {h}" role="img" aria-labelledby="{id}-t {id}-d" xmlns="http://www.w3.org/2000/svg"><title id="{id}-t">{}</title><desc id="{id}-d">{}</desc>"#,
        esc(title),
        esc(description)
    );
    let _ = write!(
        out,
        r#"<text class="ct" x="{LEFT}" y="22">{}</text>"#,
        esc(title)
    );
    plot.frame(&mut out);
    plot.guides(&mut out, guides);
    for (i, s) in series.iter().enumerate() {
        plot.series(&mut out, i, s);
    }
    if legend_rows > 0 {
        legend(&mut out, series);
    }
    out.push_str("</svg>");
    out
}

/// The plotting area of one chart and its two axes.
struct Plot<'a> {
    top: f64,
    h: f64,
    pw: f64,
    ph: f64,
    x: &'a Axis,
    y: &'a Axis,
}

impl Plot<'_> {
    fn sx(&self, v: f64) -> f64 {
        LEFT + self.x.frac(v).clamp(-0.02, 1.02) * self.pw
    }

    fn sy(&self, v: f64) -> f64 {
        self.top + (1.0 - self.y.frac(v).clamp(-0.02, 1.02)) * self.ph
    }

    /// Frame, grid, ticks and axis labels.
    fn frame(&self, out: &mut String) {
        let (top, pw, ph, h) = (self.top, self.pw, self.ph, self.h);
        let (x, y) = (self.x, self.y);
        let _ = write!(
            out,
            r#"<rect class="frame" x="{LEFT}" y="{top}" width="{pw}" height="{ph}"/>"#
        );
        let xt: Vec<(f64, String)> = if x.names.is_empty() {
            x.ticks()
                .into_iter()
                .map(|t| (t, tick_text(t, x.log)))
                .collect()
        } else {
            x.names.clone()
        };
        for (t, text) in xt {
            let px = self.sx(t);
            let _ = write!(
                out,
                r#"<line class="grid" x1="{px:.1}" y1="{top}" x2="{px:.1}" y2="{:.1}"/><text class="tk" x="{px:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
                top + ph,
                top + ph + 16.0,
                esc(&text)
            );
        }
        for t in y.ticks() {
            let py = self.sy(t);
            let _ = write!(
                out,
                r#"<line class="grid" x1="{LEFT}" y1="{py:.1}" x2="{:.1}" y2="{py:.1}"/><text class="tk" x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"#,
                LEFT + pw,
                LEFT - 6.0,
                py + 4.0,
                tick_text(t, y.log)
            );
        }
        let _ = write!(
            out,
            r#"<text class="al" x="{:.1}" y="{:.1}" text-anchor="middle">{}</text><text class="al" transform="translate(16 {:.1}) rotate(-90)" text-anchor="middle">{}</text>"#,
            LEFT + pw / 2.0,
            h - 12.0,
            esc(&x.label),
            top + ph / 2.0,
            esc(&y.label)
        );
    }

    /// Horizontal guide lines with their labels.
    fn guides(&self, out: &mut String, guides: &[Guide]) {
        let pw = self.pw;
        for g in guides {
            let py = self.sy(g.y);
            let (lx, anchor) = if g.at_left {
                (LEFT + 4.0, "start")
            } else {
                (LEFT + pw - 4.0, "end")
            };
            let _ = write!(
                out,
                r#"<line class="guide" x1="{LEFT}" y1="{py:.1}" x2="{:.1}" y2="{py:.1}"/><text class="gl" x="{lx:.1}" y="{:.1}" text-anchor="{anchor}">{}</text>"#,
                LEFT + pw,
                py - 4.0,
                esc(&g.label)
            );
        }
    }

    /// One series: its line, interval bars and markers, each point with a tooltip.
    fn series(&self, out: &mut String, i: usize, s: &Series) {
        let x = self.x;
        let _ = write!(
            out,
            r#"<g class="series s{i}" aria-label="{}">"#,
            esc(&s.name)
        );
        if s.line && s.points.len() > 1 {
            let d: Vec<String> = s
                .points
                .iter()
                .map(|p| format!("{:.1},{:.1}", self.sx(p.x), self.sy(p.y)))
                .collect();
            let _ = write!(out, r#"<polyline class="ln" points="{}"/>"#, d.join(" "));
        }
        for p in &s.points {
            let (px, py) = (self.sx(p.x), self.sy(p.y));
            let _ = write!(out, r#"<g class="pt" data-x="{}" data-y="{}">"#, p.x, p.y);
            if let Some((lo, hi)) = p.interval {
                let (a, b) = (self.sy(lo), self.sy(hi));
                let _ = write!(
                    out,
                    r#"<path class="bar" d="M{px:.1} {a:.1}V{b:.1}M{:.1} {a:.1}h8M{:.1} {b:.1}h8"/>"#,
                    px - 4.0,
                    px - 4.0
                );
            }
            marker(out, s.mark, px, py);
            let _ = write!(
                out,
                "<title>{}: {} = {}, {}</title></g>",
                esc(&s.name),
                esc(&x.label),
                tick_text(p.x, false),
                match p.interval {
                    Some((lo, hi)) => {
                        let pr = crate::output::number::precision(p.y, (hi - lo) / 2.0, 4);
                        format!(
                            "{} (interval {} to {})",
                            pr.show(p.y),
                            pr.show(lo),
                            pr.show(hi)
                        )
                    }
                    None => crate::output::number::decimal(p.y, 4),
                }
            );
        }
        out.push_str("</g>");
    }
}

/// The legend, in rows of its own between the title and the plot, with the same markers.
fn legend(out: &mut String, series: &[Series]) {
    for (i, s) in series.iter().enumerate() {
        let ly = TOP0 - 4.0 + LEGEND_ROW * i as f64;
        let lx = LEFT + 8.0;
        let _ = write!(out, r#"<g class="series s{i} legend">"#);
        marker(out, s.mark, lx, ly - 4.0);
        let _ = write!(
            out,
            r#"</g><text class="lg" x="{:.1}" y="{ly:.1}">{}</text>"#,
            lx + 10.0,
            esc(&s.name)
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axes_and_points() {
        let a = Axis::fit("degree", true, [3.0, 700.0], false);
        assert_eq!((a.lo, a.hi), (1.0, 1000.0));
        assert_eq!(a.ticks(), vec![1.0, 10.0, 100.0, 1000.0]);
        let b = Axis::fit("share", false, [0.1, 0.47], true);
        assert_eq!(b.lo, 0.0);
        assert!(b.ticks().contains(&0.2));
        let s = Series {
            name: "a<b".into(),
            mark: Mark::Diamond,
            line: true,
            points: vec![
                Point {
                    x: 1.0,
                    y: 0.2,
                    interval: Some((0.1, 0.3)),
                },
                Point {
                    x: 10.0,
                    y: 0.4,
                    interval: None,
                },
            ],
        };
        let svg = chart("c", "T", "D", &a, &b, &[s], &[]);
        assert_eq!(svg.matches(r#"<g class="pt""#).count(), 2);
        assert!(svg.contains("a&lt;b") && svg.contains("<title id=\"c-t\">T</title>"));
    }
}
