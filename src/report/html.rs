//! The HTML report (`rank --report FILE.html`): one self-contained file (inline
//! CSS and SVG, no script, nothing fetched) built from the same [`Context`]
//! as the text and JSON reports: another view of one ranking, never a second
//! computation. Sections: the input, the plausibility rules applied, the top
//! candidates (drawing with each H group marked, probability, cost, reason,
//! simulated spectrum over the observed multiplets, signal-by-signal
//! assignment), the groups the data cannot separate with the evidence that
//! would separate them, the absolute fit verdict (and its warning), and the
//! safety wording.

use super::drawing::{structure_svg, DrawOptions, Highlight, GROUP_COLOURS};
use super::spectrum_plot::{self, ObservedMark, SimSignal, Stick};
use super::text::{display_name, fmt_dbe, fmt_observed, fmt_probability, fmt_signal, header_of};
use super::{Context, Source, SAFETY};
use crate::enumerate::rules::Rule;
use crate::predict::{Multiplicity, PredictedCarbon, PredictedSignal};
use crate::rank::Ranked;
use crate::score;
use crate::spectrum::{ObservedMultiplet, Spectrum};
use std::fmt::Write;

/// Candidates shown in full (drawing, spectrum, assignment).
pub const DETAILED: usize = 5;

fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Letter of predicted group `i`: a, b, ..., z, then a2, b2, ...
pub fn group_letter(i: usize) -> String {
    let c = (b'a' + (i % 26) as u8) as char;
    if i < 26 {
        c.to_string()
    } else {
        format!("{c}{}", i / 26 + 1)
    }
}

fn group_colour(i: usize) -> String {
    GROUP_COLOURS[i % GROUP_COLOURS.len()].to_string()
}

/// The simulation's input from a predicted multiplet list.
pub fn sim_signals(predicted: &[PredictedSignal]) -> Vec<SimSignal> {
    predicted
        .iter()
        .enumerate()
        .map(|(i, p)| SimSignal {
            shift: p.shift,
            hydrogens: p.hydrogens as f64,
            partners: match &p.multiplicity {
                Multiplicity::Coupled(ns) => ns.clone(),
                _ => Vec::new(),
            },
            j_hz: p.j_hz.clone(),
            unresolved: p.multiplicity == Multiplicity::Multiplet,
            broad: p.exchangeable,
            label: group_letter(i),
            colour: group_colour(i),
        })
        .collect()
}

/// The observed multiplets as marks for the plot.
pub fn observed_marks(s: &Spectrum) -> Vec<ObservedMark> {
    s.multiplets
        .iter()
        .map(|o: &ObservedMultiplet| {
            let mut label = format!("{} {}", o.shift_text(), o.pattern.label());
            if let Some(h) = o.hydrogens {
                let _ = write!(label, " {h:.0}H");
            }
            ObservedMark {
                shift: o.shift,
                range: o.range.map(|(a, b)| (a.min(b), a.max(b))),
                hydrogens: o.hydrogens,
                label,
            }
        })
        .collect()
}

/// Predicted 13C classes as sticks (label: CH3, CH2, CH, C and the count).
pub fn carbon_sticks(carbons: &[PredictedCarbon]) -> Vec<Stick> {
    carbons
        .iter()
        .map(|c| {
            let kind = match c.hydrogens {
                0 => "C".to_string(),
                1 => "CH".to_string(),
                h => format!("CH{h}"),
            };
            Stick {
                shift: c.shift,
                label: if c.carbons > 1 {
                    format!("{kind} ×{}", c.carbons)
                } else {
                    kind
                },
            }
        })
        .collect()
}

const STYLE: &str = "body{font-family:DejaVu Sans,Arial,Helvetica,sans-serif;margin:1.5em auto;max-width:1000px;color:#111;padding:0 1em}\
h1{font-size:1.5em}h2{font-size:1.2em;border-bottom:1px solid #ccc;padding-bottom:.2em;margin-top:1.6em}\
table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #ccc;padding:.2em .5em;text-align:left;vertical-align:top;font-size:.92em}\
th{background:#f2f2f2}.num{text-align:right}.cand{border:1px solid #bbb;border-radius:6px;padding:.8em;margin:1em 0}\
.cand .top{display:flex;gap:1.5em;align-items:flex-start;flex-wrap:wrap}.smiles{font-family:DejaVu Sans Mono,monospace}\
.warning{border:2px solid #b00;padding:.5em}.safety{border:2px solid #b00;background:#fff4f4;padding:.8em;margin-top:2em}.swatch{display:inline-block;width:.9em;height:.9em;border-radius:50%;vertical-align:middle}\
svg{max-width:100%;height:auto}";

/// The whole report as one HTML document.
pub fn render(cx: &Context) -> String {
    let r = cx.ranking;
    let s = cx.spectrum;
    let mut h = String::new();
    let _ = writeln!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>isomerank: {}</title><style>{STYLE}</style></head><body>",
        esc(&cx.formula.to_string())
    );
    let _ = writeln!(
        h,
        "<h1>Candidates for {} (DBE {})</h1>",
        esc(&cx.formula.to_string()),
        fmt_dbe(cx.formula.dbe())
    );
    // Input.
    let _ = writeln!(h, "<h2>Input</h2>");
    let _ = writeln!(
        h,
        "<p>{} observed multiplet{}{}.</p>",
        s.multiplets.len(),
        if s.multiplets.len() == 1 { "" } else { "s" },
        esc(&header_of(s))
    );
    let _ = writeln!(
        h,
        "<table><tr><th>entry</th><th>δ / ppm</th><th>multiplicity</th><th>J / Hz</th><th>integral (H)</th><th>note</th></tr>"
    );
    for o in &s.multiplets {
        let js: Vec<String> = o.j_hz.iter().map(|j| format!("{j}")).collect();
        let note = o
            .solvent
            .as_ref()
            .map(|sp| format!("where {} ({}) is expected", sp.species, sp.solvent))
            .unwrap_or_default();
        let _ = writeln!(
            h,
            "<tr><td class=\"num\">{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"num\">{}</td><td>{}</td></tr>",
            o.entry,
            esc(&o.shift_text()),
            esc(&o.pattern.label()),
            js.join(", "),
            o.hydrogens.map(|x| format!("{x:.1}")).unwrap_or_default(),
            esc(&note)
        );
    }
    h.push_str("</table>\n");
    for n in &s.notes {
        let _ = writeln!(h, "<p>Note: {}</p>", esc(n));
    }
    // Candidates and rules.
    let _ = writeln!(h, "<h2>Candidates considered</h2>");
    match &cx.source {
        Source::Enumeration { rules, constraints } => {
            let which = super::candidate_set(cx, constraints);
            let which = format!("{}{}", which[..1].to_uppercase(), &which[1..]);
            let _ = writeln!(h, "<p>{}.</p>", esc(&which));
            if rules.is_empty() {
                h.push_str("<p>Plausibility rules: off (<code>--keep-all</code>).</p>\n");
            } else {
                h.push_str("<p>Plausibility rules applied (<code>--keep-all</code> turns them off):</p>\n<table><tr><th>rule</th><th>removed</th><th>reason</th></tr>\n");
                for name in rules {
                    let reason = Rule::from_name(name).map(|x| x.reason()).unwrap_or("");
                    let _ = writeln!(
                        h,
                        "<tr><td>{}</td><td class=\"num\">{}</td><td>{}</td></tr>",
                        esc(name),
                        r.removed_by(name),
                        esc(reason)
                    );
                }
                h.push_str("</table>\n");
            }
        }
        Source::Shortlist => {
            let _ = writeln!(
                h,
                "<p>A shortlist of {} structures (no plausibility rules).</p>",
                r.considered
            );
        }
    }
    if r.skipped > 0 {
        let _ = writeln!(
            h,
            "<p>{} candidates were provably far from the top and not scored exactly; their total weight in the probabilities is below 1e-7.</p>",
            r.skipped
        );
    }
    // Ranked table.
    let _ = writeln!(h, "<h2>Ranking</h2>");
    h.push_str("<table><tr><th>rank</th><th>probability</th><th>cost</th><th>group</th><th>structure (SMILES)</th><th>reason</th></tr>\n");
    let mut reasons = Vec::with_capacity(r.candidates.len());
    for c in &r.candidates {
        let e = score::explain(&c.predicted, s, cx.model, &c.scored);
        let reason = score::reason(&c.predicted, s, &e);
        let _ = writeln!(
            h,
            "<tr><td class=\"num\"><a href=\"#c{0}\">{0}</a></td><td class=\"num\">{1}</td><td class=\"num\">{2:.2}</td><td class=\"num\">{3}</td><td class=\"smiles\">{4}</td><td>{5}</td></tr>",
            c.position,
            fmt_probability(c.probability),
            c.cost,
            c.group,
            esc(&display_name(c)),
            esc(&reason)
        );
        reasons.push(reason);
    }
    h.push_str("</table>\n");
    // The absolute fit verdict on the first candidate.
    if let Some((v, table)) = super::verdict(cx) {
        let (line, warning) = crate::rank::verdict::describe(&v, &table);
        let _ = writeln!(h, "<p class=\"fit\">{}</p>", esc(&line));
        if let Some(w) = warning {
            let _ = writeln!(h, "<p class=\"warning\"><b>{}</b></p>", esc(&w));
        }
    }
    // What would separate the leading candidates.
    let (lead, lead_evidence) = super::leading(cx);
    if !lead.is_empty() {
        let _ = writeln!(
            h,
            "<h2>Next experiments</h2><p>{}</p>",
            esc(&super::leading_heading(cx, &lead))
        );
        if lead_evidence.is_empty() {
            h.push_str("<p>None of the observations considered (13C count, DEPT, C=O region, multiplicity, J, COSY, HMBC) separates them.</p>\n");
        } else {
            h.push_str("<ul>\n");
            for ev in &lead_evidence {
                let _ = writeln!(h, "<li>{}</li>", esc(ev));
            }
            h.push_str("</ul>\n");
        }
    }
    // Groups the data cannot separate.
    let shared: Vec<_> = r
        .groups
        .iter()
        .filter(|g| g.members.len() > 1 || g.beyond_table > 0)
        .collect();
    if !shared.is_empty() {
        let _ = writeln!(
            h,
            "<h2>Candidates the data cannot separate</h2><p>Costs within {} of the group's first member.</p>",
            cx.model.ranking.indistinguishable_margin
        );
        for g in shared {
            let members: Vec<String> = g
                .members
                .iter()
                .map(|p| format!("<a href=\"#c{p}\">#{p}</a>"))
                .collect();
            let more = if g.beyond_table > 0 {
                format!(" and {} more beyond the table", g.beyond_table)
            } else {
                String::new()
            };
            let _ = writeln!(
                h,
                "<p><b>group {}</b>: {}{}</p>",
                g.id,
                members.join(", "),
                more
            );
            if !g.evidence.is_empty() {
                h.push_str("<ul>\n");
                for ev in &g.evidence {
                    let _ = writeln!(h, "<li>{}</li>", esc(ev));
                }
                h.push_str("</ul>\n");
            }
        }
    }
    // The top candidates in detail.
    let _ = writeln!(h, "<h2>Top candidates</h2>");
    let mhz = s.frequency_mhz.unwrap_or(400.0);
    let marks = observed_marks(s);
    for (c, reason) in r.candidates.iter().zip(&reasons).take(DETAILED) {
        candidate_card(&mut h, cx, c, reason, &marks, mhz);
    }
    let _ = writeln!(
        h,
        "<div class=\"safety\"><b>Safety.</b> {}</div>\n</body></html>",
        esc(SAFETY)
    );
    h
}

fn candidate_card(
    h: &mut String,
    cx: &Context,
    c: &Ranked,
    reason: &str,
    marks: &[ObservedMark],
    mhz: f64,
) {
    let s = cx.spectrum;
    let highlights: Vec<Highlight> = c
        .predicted
        .iter()
        .enumerate()
        .map(|(i, p)| Highlight {
            atoms: p.atoms.clone(),
            label: group_letter(i),
            colour: group_colour(i),
        })
        .collect();
    let drawing = structure_svg(
        &c.molecule,
        &DrawOptions {
            highlights,
            title: Some(c.smiles.clone()),
            ..Default::default()
        },
    );
    let _ = writeln!(
        h,
        "<div class=\"cand\" id=\"c{0}\"><h3>#{0} <span class=\"smiles\">{1}</span></h3><div class=\"top\"><div>{2}</div><div><p>probability <b>{3}</b>, cost {4:.2} (−ln likelihood), group {5}</p><p>{6}</p><p>13C signals expected (carbon symmetry classes): {7}</p></div></div>",
        c.position,
        esc(&display_name(c)),
        drawing,
        fmt_probability(c.probability),
        c.cost,
        c.group,
        esc(reason),
        c.carbon_signals
    );
    let sims = sim_signals(&c.predicted);
    let links: Vec<(usize, usize)> = c
        .scored
        .assigned
        .iter()
        .enumerate()
        .filter_map(|(i, o)| o.map(|j| (i, j)))
        .collect();
    h.push_str(&spectrum_plot::proton_svg(&sims, marks, &links, mhz));
    // The 13C lines against the predicted classes, when 13C data were given.
    if let (Some(cs), Some(_)) = (cx.carbon, &c.carbon_scored) {
        let observed: Vec<Stick> = cs
            .lines
            .iter()
            .map(|l| Stick {
                shift: l.shift,
                label: match l.count {
                    Some(n) if n > 1 => format!("{} ×{n}", l.kind_label()),
                    _ => l.kind_label().to_string(),
                },
            })
            .collect();
        h.push_str(&spectrum_plot::carbon_svg(
            &carbon_sticks(&c.carbons),
            &observed,
        ));
    }
    // Assignment table.
    let e = score::explain(&c.predicted, s, cx.model, &c.scored);
    h.push_str("<table><tr><th>group</th><th>predicted</th><th>observed</th><th>shift term</th><th>multiplicity term</th><th>J term</th></tr>\n");
    for l in &e.groups {
        let p = &c.predicted[l.group];
        let (obs, terms) = match (l.observed, l.terms) {
            (Some(j), Some(t)) => (
                esc(&fmt_observed(&s.multiplets[j])),
                format!(
                    "<td class=\"num\">{:.2}</td><td class=\"num\">{:.2}</td><td class=\"num\">{:.2}</td>",
                    t.shift, t.multiplicity, t.coupling
                ),
            ),
            _ => (
                format!(
                    "not observed{}",
                    if p.exchangeable {
                        " (exchangeable H often missing)"
                    } else {
                        ""
                    }
                ),
                format!(
                    "<td colspan=\"3\">left unassigned, {:.2}</td>",
                    l.unassigned.unwrap_or(0.0)
                ),
            ),
        };
        let _ = writeln!(
            h,
            "<tr><td><span class=\"swatch\" style=\"background:{}\"></span> {}</td><td>{}</td><td>{}</td>{}</tr>",
            group_colour(l.group),
            group_letter(l.group),
            esc(&fmt_signal(p)),
            obs,
            terms
        );
    }
    for m in &e.multiplets {
        if m.groups.is_empty() {
            let o = &s.multiplets[m.observed];
            let why = match &o.solvent {
                Some(sp) => format!("set aside as the {} peak of {}", sp.kind, sp.species),
                None => "explained by no predicted group".to_string(),
            };
            let _ = writeln!(
                h,
                "<tr><td></td><td></td><td>{}</td><td colspan=\"3\">{}, {:.2}</td></tr>",
                esc(&fmt_observed(o)),
                esc(&why),
                m.cost
            );
        }
    }
    let _ = writeln!(h, "<tr><th colspan=\"3\">total</th><th colspan=\"3\" class=\"num\">{:.2}</th></tr></table></div>", e.total);
}
