//! Spectrum pictures (SVG): a simulated 1H spectrum from a predicted
//! multiplet list against the observed multiplets, and 13C sticks.
//!
//! The simulation is first order (common practice): each group's lines sit
//! at the shift plus the sum of ±J/2 steps, in Hz converted to ppm at the
//! spectrometer frequency; for n equivalent partners of one J the
//! intensities are a row of Pascal's triangle, for several J the product of
//! the rows (the same rule as `predict::Multiplicity::intensities`). Each
//! line is a Lorentzian of the stated full width at half height; a group's
//! lines add up to its H count. A pattern that is not first order (m) is
//! drawn as one broad Lorentzian, an exchangeable H (OH, NH) as a broad
//! singlet; the widths are stated in the picture.
//!
//! The observed data are drawn as what they are: reported positions (or
//! ranges) with their multiplicity and integral, as bars under the axis,
//! never as a measured trace. Plots are fed plain lists ([`SimSignal`],
//! [`ObservedMark`], [`Stick`]) so any source can be adapted to them.
//! The ppm axis decreases to the right, as spectra are printed.

use std::fmt::Write;

/// One predicted group for the simulation.
#[derive(Clone, Debug)]
pub struct SimSignal {
    pub shift: f64,
    pub hydrogens: f64,
    /// Equivalent partners per J (largest J first); empty for a singlet.
    pub partners: Vec<u8>,
    /// J per entry of `partners`, Hz.
    pub j_hz: Vec<f64>,
    /// Not first order (drawn as one broad line).
    pub unresolved: bool,
    /// Exchangeable H (drawn broad).
    pub broad: bool,
    /// Label written over the signal (e.g. the group letter).
    pub label: String,
    /// CSS colour of the label and of the assignment link.
    pub colour: String,
}

/// One observed multiplet as reported.
#[derive(Clone, Debug)]
pub struct ObservedMark {
    pub shift: f64,
    pub range: Option<(f64, f64)>,
    pub hydrogens: Option<f64>,
    /// e.g. "q, 7.1 Hz, 2H".
    pub label: String,
}

/// A 13C line: shift and label.
#[derive(Clone, Debug)]
pub struct Stick {
    pub shift: f64,
    pub label: String,
}

/// Full width at half height of a resolved line, Hz.
pub const LINE_WIDTH_HZ: f64 = 1.0;
/// Width of an exchangeable H's broad singlet, Hz.
pub const BROAD_WIDTH_HZ: f64 = 12.0;
/// Width of a pattern that is not first order (m), Hz.
pub const UNRESOLVED_WIDTH_HZ: f64 = 25.0;
/// J used when a coupled group has no J estimate, Hz (a typical vicinal
/// J in a freely rotating chain; common practice).
const DEFAULT_J_HZ: f64 = 7.0;

/// The lines of one group: (ppm, intensity, full width in Hz); the
/// intensities add up to the group's H count.
pub fn lines(s: &SimSignal, mhz: f64) -> Vec<(f64, f64, f64)> {
    if s.unresolved {
        return vec![(s.shift, s.hydrogens, UNRESOLVED_WIDTH_HZ)];
    }
    // (offset in Hz, weight)
    let mut out: Vec<(f64, f64)> = vec![(0.0, 1.0)];
    for (k, &n) in s.partners.iter().enumerate() {
        let j = s.j_hz.get(k).copied().unwrap_or(DEFAULT_J_HZ);
        let mut row = vec![1.0f64];
        for i in 0..n as usize {
            let next = row[i] * (n as f64 - i as f64) / (i as f64 + 1.0);
            row.push(next);
        }
        let mut next = Vec::with_capacity(out.len() * row.len());
        for &(off, w) in &out {
            for (i, &r) in row.iter().enumerate() {
                next.push((off + (i as f64 - n as f64 / 2.0) * j, w * r));
            }
        }
        out = next;
    }
    let total: f64 = out.iter().map(|x| x.1).sum();
    let width = if s.broad && s.partners.is_empty() {
        BROAD_WIDTH_HZ
    } else {
        LINE_WIDTH_HZ
    };
    out.into_iter()
        .map(|(off, w)| (s.shift + off / mhz, s.hydrogens * w / total, width))
        .collect()
}

/// The simulated trace at `ppm`: a sum of Lorentzians of unit area per H
/// count (widths in Hz at `mhz`).
pub fn trace_at(all: &[(f64, f64, f64)], ppm: f64, mhz: f64) -> f64 {
    all.iter()
        .map(|&(x0, w, width_hz)| {
            let g = width_hz / 2.0 / mhz; // half width, ppm
            w * g / std::f64::consts::PI / ((ppm - x0).powi(2) + g * g)
        })
        .sum()
}

fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// The ppm window: every shift with a margin, at least 0 to 10 ppm for 1H.
fn window(shifts: impl Iterator<Item = f64>, lo0: f64, hi0: f64, pad: f64) -> (f64, f64) {
    let (mut lo, mut hi) = (lo0, hi0);
    for s in shifts {
        lo = lo.min(s - pad);
        hi = hi.max(s + pad);
    }
    (lo.floor(), hi.ceil())
}

/// Axis with ticks; returns the SVG and the x of a ppm value.
fn axis(s: &mut String, (lo, hi): (f64, f64), y: f64, step: f64, nucleus: &str) {
    let (x0, x1) = (LEFT, RIGHT);
    let xp = |p: f64| x0 + (hi - p) / (hi - lo) * (x1 - x0);
    let _ = writeln!(
        s,
        r#"<line x1="{x0:.1}" y1="{y:.1}" x2="{x1:.1}" y2="{y:.1}" stroke="black"/>"#
    );
    let mut t = (lo / step).ceil() * step;
    while t <= hi + 1e-9 {
        let x = xp(t);
        let _ = writeln!(
            s,
            r#"<line x1="{x:.1}" y1="{y:.1}" x2="{x:.1}" y2="{:.1}" stroke="black"/><text x="{x:.1}" y="{:.1}" font-size="11" text-anchor="middle">{}</text>"#,
            y + 5.0,
            y + 17.0,
            if step < 1.0 {
                format!("{t:.1}")
            } else {
                format!("{t:.0}")
            }
        );
        t += step;
    }
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" font-size="11" text-anchor="end">δ {nucleus} / ppm</text>"#,
        x1,
        y + 29.0
    );
}

const W: f64 = 760.0;
const LEFT: f64 = 20.0;
const RIGHT: f64 = 740.0;

/// The simulated 1H spectrum of `predicted` over the observed multiplets;
/// `links` joins predicted group i to observed multiplet j (assignment).
pub fn proton_svg(
    predicted: &[SimSignal],
    observed: &[ObservedMark],
    links: &[(usize, usize)],
    mhz: f64,
) -> String {
    let (lo, hi) = window(
        predicted
            .iter()
            .map(|p| p.shift)
            .chain(observed.iter().flat_map(|o| {
                let (a, b) = o.range.unwrap_or((o.shift, o.shift));
                [a, b]
            })),
        0.0,
        10.0,
        0.3,
    );
    let xp = |p: f64| LEFT + (hi - p) / (hi - lo) * (RIGHT - LEFT);
    let (top, base, obs_y) = (34.0, 190.0, 246.0);
    let inset_y = obs_y + 78.0;
    let h = if predicted.is_empty() {
        310.0
    } else {
        inset_y + 92.0
    };
    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{W:.0}" height="{h:.0}" viewBox="0 0 {W:.0} {h:.0}" font-family="DejaVu Sans, Arial, Helvetica, sans-serif">"#
    );
    let _ = writeln!(s, r#"<rect width="{W:.0}" height="{h:.0}" fill="white"/>"#);
    let _ = writeln!(
        s,
        r##"<text x="{LEFT}" y="14" font-size="12">predicted 1H, first order, simulated at {mhz:.0} MHz (lines {LINE_WIDTH_HZ:.0} Hz wide; m {UNRESOLVED_WIDTH_HZ:.0} Hz, broad s {BROAD_WIDTH_HZ:.0} Hz)</text>"##
    );
    // Trace, sampled densely enough for the narrowest line.
    let all: Vec<(f64, f64, f64)> = predicted.iter().flat_map(|p| lines(p, mhz)).collect();
    let samples = 2400usize;
    let mut pts = Vec::with_capacity(samples + 1);
    for i in 0..=samples {
        let p = hi - (hi - lo) * i as f64 / samples as f64;
        pts.push((p, trace_at(&all, p, mhz)));
    }
    // Also the exact line centres, so no peak top is missed between samples.
    for &(x0, _, _) in &all {
        pts.push((x0, trace_at(&all, x0, mhz)));
    }
    pts.sort_by(|a, b| b.0.total_cmp(&a.0));
    // Scale: the tallest group peak to the plot height.
    let ymax = pts.iter().map(|p| p.1).fold(1e-12, f64::max);
    let yp = |v: f64| base - v / ymax * (base - top);
    let mut d = String::new();
    for (k, &(p, v)) in pts.iter().enumerate() {
        let _ = write!(
            d,
            "{}{:.1},{:.1} ",
            if k == 0 { "M" } else { "L" },
            xp(p),
            yp(v)
        );
    }
    let _ = writeln!(
        s,
        r##"<path d="{d}" fill="none" stroke="#1f3f8f" stroke-width="1"/>"##
    );
    // Group labels over each group's tallest point.
    for p in predicted {
        let v = lines(p, mhz)
            .iter()
            .map(|&(x, _, _)| trace_at(&all, x, mhz))
            .fold(0.0, f64::max);
        let _ = writeln!(
            s,
            r#"<text x="{:.1}" y="{:.1}" font-size="12" font-weight="bold" text-anchor="middle" fill="{}">{}</text>"#,
            xp(p.shift),
            (yp(v) - 4.0).max(top - 6.0),
            p.colour,
            escape(&p.label)
        );
    }
    axis(&mut s, (lo, hi), base, 1.0, "1H");
    // Observed multiplets: a bar (or a box for a range) under the axis,
    // height by integral, with the reported text.
    let _ = writeln!(
        s,
        r##"<text x="{LEFT}" y="{:.1}" font-size="11">observed (reported multiplets: position or range, multiplicity, integral)</text>"##,
        obs_y - 8.0
    );
    let hmax = observed
        .iter()
        .filter_map(|o| o.hydrogens)
        .fold(1.0, f64::max);
    let mut last_label_x = f64::INFINITY;
    let mut row = 0;
    for o in observed {
        let hgt = 8.0 + 20.0 * o.hydrogens.unwrap_or(1.0) / hmax;
        match o.range {
            Some((a, b)) => {
                let (x1, x2) = (xp(a.max(b)), xp(a.min(b)));
                let _ = writeln!(
                    s,
                    r##"<rect x="{x1:.1}" y="{:.1}" width="{:.1}" height="{hgt:.1}" fill="#999" fill-opacity="0.5" stroke="#444"/>"##,
                    obs_y,
                    (x2 - x1).max(1.5)
                );
            }
            None => {
                let x = xp(o.shift);
                let _ = writeln!(
                    s,
                    r##"<rect x="{:.1}" y="{obs_y:.1}" width="3" height="{hgt:.1}" fill="#444"/>"##,
                    x - 1.5
                );
            }
        }
        // Labels alternate rows when crowded.
        let x = xp(o.shift);
        row = if (last_label_x - x).abs() < 90.0 {
            1 - row
        } else {
            0
        };
        last_label_x = x;
        let _ = writeln!(
            s,
            r#"<text x="{x:.1}" y="{:.1}" font-size="10" text-anchor="middle">{}</text>"#,
            obs_y + 40.0 + 12.0 * row as f64,
            escape(&o.label)
        );
    }
    // Assignment links: predicted group -> observed multiplet.
    for &(i, j) in links {
        if let (Some(p), Some(o)) = (predicted.get(i), observed.get(j)) {
            let _ = writeln!(
                s,
                r#"<line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{}" stroke-dasharray="3,3" stroke-width="1.2"/>"#,
                xp(p.shift),
                base + 2.0,
                xp(o.shift),
                obs_y - 2.0,
                p.colour
            );
        }
    }
    insets(&mut s, predicted, mhz, inset_y);
    s.push_str("</svg>\n");
    s
}

/// A row of small boxes, one per predicted group (highest shift left), each
/// the group's own lines expanded so its multiplicity can be seen.
fn insets(s: &mut String, predicted: &[SimSignal], mhz: f64, y: f64) {
    if predicted.is_empty() {
        return;
    }
    let mut order: Vec<usize> = (0..predicted.len()).collect();
    order.sort_by(|&a, &b| predicted[b].shift.total_cmp(&predicted[a].shift));
    let n = order.len() as f64;
    let gap = 8.0;
    let w = ((RIGHT - LEFT - gap * (n - 1.0)) / n).min(110.0);
    let h = 60.0;
    let _ = writeln!(
        s,
        r#"<text x="{LEFT}" y="{:.1}" font-size="11">each predicted group expanded (its lines only; the box spans the Hz shown)</text>"#,
        y - 6.0
    );
    for (k, &i) in order.iter().enumerate() {
        let p = &predicted[i];
        let ls = lines(p, mhz);
        let span_hz = ls
            .iter()
            .map(|l| ((l.0 - p.shift) * mhz).abs() + l.2)
            .fold(0.0, f64::max);
        let half = (span_hz + 6.0).max(12.0); // Hz each side
        let x0 = LEFT + k as f64 * (w + gap);
        let _ = writeln!(
            s,
            r##"<rect x="{x0:.1}" y="{y:.1}" width="{w:.1}" height="{h:.1}" fill="none" stroke="#bbb"/>"##
        );
        let samples = 240;
        let pts: Vec<(f64, f64)> = (0..=samples)
            .map(|j| {
                let hz = half - 2.0 * half * j as f64 / samples as f64;
                (hz, trace_at(&ls, p.shift + hz / mhz, mhz))
            })
            .collect();
        let top = ls
            .iter()
            .map(|l| trace_at(&ls, l.0, mhz))
            .fold(1e-12, f64::max);
        let mut d = String::new();
        for (j, &(hz, v)) in pts.iter().enumerate() {
            let x = x0 + (half - hz) / (2.0 * half) * w;
            let yy = y + h - 4.0 - v / top * (h - 18.0);
            let _ = write!(d, "{}{x:.1},{yy:.1} ", if j == 0 { "M" } else { "L" });
        }
        let _ = writeln!(
            s,
            r#"<path d="{d}" fill="none" stroke="{}" stroke-width="1"/>"#,
            p.colour
        );
        let _ = writeln!(
            s,
            r##"<text x="{:.1}" y="{:.1}" font-size="10" fill="{}">{} {:.2}</text><text x="{:.1}" y="{:.1}" font-size="9" text-anchor="end" fill="#666">±{half:.0} Hz</text>"##,
            x0 + 3.0,
            y + 11.0,
            p.colour,
            escape(&p.label),
            p.shift,
            x0 + w - 3.0,
            y + 11.0
        );
    }
}

/// 13C lines as sticks: predicted upwards, observed downwards (when given).
pub fn carbon_svg(predicted: &[Stick], observed: &[Stick]) -> String {
    let (lo, hi) = window(
        predicted.iter().chain(observed).map(|x| x.shift),
        0.0,
        100.0,
        10.0,
    );
    let (lo, hi) = ((lo / 20.0).floor() * 20.0, (hi / 20.0).ceil() * 20.0);
    let xp = |p: f64| LEFT + (hi - p) / (hi - lo) * (RIGHT - LEFT);
    let h = 200.0;
    let axis_y = 110.0;
    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{W:.0}" height="{h:.0}" viewBox="0 0 {W:.0} {h:.0}" font-family="DejaVu Sans, Arial, Helvetica, sans-serif">"#
    );
    let _ = writeln!(s, r#"<rect width="{W:.0}" height="{h:.0}" fill="white"/>"#);
    let _ = writeln!(
        s,
        r#"<text x="{LEFT}" y="14" font-size="12">13C: predicted (up){}</text>"#,
        if observed.is_empty() {
            ""
        } else {
            ", observed (down)"
        }
    );
    for (sticks, up, colour) in [(predicted, true, "#1f3f8f"), (observed, false, "#444")] {
        for (k, st) in sticks.iter().enumerate() {
            let x = xp(st.shift);
            let (y1, y2) = if up {
                (axis_y, axis_y - 70.0)
            } else {
                (axis_y + 36.0, axis_y + 70.0)
            };
            let _ = writeln!(
                s,
                r#"<line x1="{x:.1}" y1="{y1:.1}" x2="{x:.1}" y2="{y2:.1}" stroke="{colour}" stroke-width="2"/>"#
            );
            let ly = if up {
                y2 - 4.0 - 11.0 * (k % 2) as f64
            } else {
                y2 + 12.0 + 11.0 * (k % 2) as f64
            };
            let _ = writeln!(
                s,
                r#"<text x="{x:.1}" y="{ly:.1}" font-size="10" text-anchor="middle" fill="{colour}">{}</text>"#,
                escape(&st.label)
            );
        }
    }
    axis(&mut s, (lo, hi), axis_y, 20.0, "13C");
    s.push_str("</svg>\n");
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    fn quartet() -> SimSignal {
        SimSignal {
            shift: 4.12,
            hydrogens: 2.0,
            partners: vec![3],
            j_hz: vec![7.1],
            unresolved: false,
            broad: false,
            label: "a".into(),
            colour: "#000".into(),
        }
    }

    // A quartet (three equivalent partners) is four lines J apart with
    // intensities 1:3:3:1 (n+1 rule, Pascal's triangle; common practice).
    #[test]
    fn quartet_lines() {
        let l = lines(&quartet(), 400.0);
        assert_eq!(l.len(), 4);
        let j_ppm = 7.1 / 400.0;
        for (k, want) in [-1.5, -0.5, 0.5, 1.5].iter().enumerate() {
            assert!((l[k].0 - (4.12 + want * j_ppm)).abs() < 1e-12);
        }
        let w: Vec<f64> = l.iter().map(|x| x.1 * 8.0 / 2.0).collect();
        for (got, want) in w.iter().zip([1.0, 3.0, 3.0, 1.0]) {
            assert!((got - want).abs() < 1e-12);
        }
    }

    // A dd (J 10 and 2 Hz) is four lines of equal height at ±6, ±4 Hz.
    #[test]
    fn doublet_of_doublets() {
        let s = SimSignal {
            partners: vec![1, 1],
            j_hz: vec![10.0, 2.0],
            hydrogens: 1.0,
            shift: 5.0,
            ..quartet()
        };
        let mut hz: Vec<f64> = lines(&s, 500.0)
            .iter()
            .map(|x| ((x.0 - 5.0) * 500.0 * 1e6).round() / 1e6)
            .collect();
        hz.sort_by(f64::total_cmp);
        assert_eq!(hz, vec![-6.0, -4.0, 4.0, 6.0]);
    }

    // A Lorentzian of full width w at half height has half its peak height
    // at ±w/2 (its definition); area per H is one.
    #[test]
    fn lorentzian_width() {
        let l = vec![(2.0, 3.0, 1.0)];
        let peak = trace_at(&l, 2.0, 400.0);
        let half = trace_at(&l, 2.0 + 0.5 / 400.0, 400.0);
        assert!((half / peak - 0.5).abs() < 1e-9);
        let step = 1e-5;
        let area: f64 = (-20000..20000)
            .map(|k| trace_at(&l, 2.0 + k as f64 * step, 400.0) * step)
            .sum();
        assert!((area - 3.0).abs() < 0.05, "{area}");
    }

    // The ppm axis decreases to the right.
    #[test]
    fn axis_decreases_to_the_right() {
        let svg = proton_svg(&[quartet()], &[], &[], 400.0);
        let x_of = |label: &str| -> f64 {
            let k = svg.find(&format!(">{label}</text>")).unwrap();
            let head = &svg[..k];
            let xk = head.rfind("<text x=\"").unwrap();
            head[xk + 9..].split('"').next().unwrap().parse().unwrap()
        };
        assert!(x_of("8") < x_of("2"));
    }
}
