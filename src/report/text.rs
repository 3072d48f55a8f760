//! The text report: header (formula, DBE, data, what was enumerated and which
//! plausibility rules were applied), the ranked table, the groups the data
//! cannot separate with the evidence that would, an optional signal-by-signal
//! assignment, and the safety wording.

use super::{Context, Source, SAFETY};
use crate::predict::{PredictedCarbon, PredictedSignal};
use crate::rank::Ranked;
use crate::score::{self, Explanation};
use crate::spectrum::carbon::carbon_kind;
use crate::spectrum::{CarbonLine, CarbonSpectrum, ObservedMultiplet, Spectrum};
use std::fmt::Write;

/// Groups whose first member has less probability than this are listed
/// without the evidence lines (they do not compete for the answer).
const EVIDENCE_MIN_PROBABILITY: f64 = 1e-3;
/// At most this many evidence lines per group in the text report (the JSON
/// report has them all).
const MAX_EVIDENCE_LINES: usize = 4;

pub fn render(cx: &Context) -> String {
    let mut out = String::new();
    let r = cx.ranking;
    let s = cx.spectrum;
    let mut against = Vec::new();
    if !s.multiplets.is_empty() {
        against.push(format!(
            "{} observed multiplet{}{}",
            s.multiplets.len(),
            if s.multiplets.len() == 1 { "" } else { "s" },
            header_of(s)
        ));
    }
    if let Some(c) = cx.carbon {
        against.push(format!(
            "{} 13C line{}{}",
            c.lines.len(),
            if c.lines.len() == 1 { "" } else { "s" },
            if c.lines.iter().any(|l| l.hydrogens.is_some()) {
                " with H counts"
            } else {
                ""
            }
        ));
    }
    let _ = writeln!(
        out,
        "{}  (DBE {})  against {}",
        cx.formula,
        fmt_dbe(cx.formula.dbe()),
        against.join(" and ")
    );
    match &cx.source {
        Source::Enumeration { rules, constraints } => {
            let _ = writeln!(
                out,
                "Candidates: {}.",
                super::candidate_set(cx, constraints)
            );
            if rules.is_empty() {
                let _ = writeln!(out, "Plausibility rules: off (--keep-all).");
            } else {
                let counts: Vec<String> = rules
                    .iter()
                    .map(|name| {
                        let n = r.removed_by(name);
                        format!("{name} ({n} removed)")
                    })
                    .collect();
                let _ = writeln!(
                    out,
                    "Plausibility rules applied (--keep-all turns them off): {}.",
                    counts.join(", ")
                );
            }
        }
        Source::Shortlist => {
            let _ = writeln!(
                out,
                "Candidates: a shortlist of {} structures.",
                r.considered
            );
        }
    }
    if let Some(stop) = r.coverage.stopped {
        let _ = writeln!(
            out,
            "PARTIAL RESULT: the run stopped at {} after {} candidates, {:.2}% of the search{}; the ranking and the probabilities are over those candidates only, and a better candidate may be in the rest.",
            super::stop_words(stop),
            r.considered,
            r.coverage.share * 100.0,
            first_stage_words(r.coverage.first_stage)
        );
    }
    if r.skipped > 0 {
        let margin = cx.model.ranking.skip_margin;
        let _ = writeln!(
            out,
            "{} candidates cost more than the best + {margin} (most were provably so and not scored exactly) and are left out of the probabilities; together they would weigh less than {:.0e}.",
            r.skipped,
            (r.skipped as f64 * (-margin).exp()).max(f64::MIN_POSITIVE)
        );
    }
    for n in s
        .notes
        .iter()
        .chain(cx.carbon.iter().flat_map(|c| &c.notes))
    {
        let _ = writeln!(out, "Note: {n}");
    }
    let _ = writeln!(out);
    let width = r
        .candidates
        .iter()
        .map(|c| display_name(c).chars().count())
        .max()
        .unwrap_or(6)
        .clamp(6, 48);
    let _ = writeln!(
        out,
        "{:>4}  {:>11}  {:>7}  {:>5}  {:<width$}  reason",
        "rank", "probability", "cost", "group", "SMILES"
    );
    for c in &r.candidates {
        let reason = super::reason(cx, c);
        let _ = writeln!(
            out,
            "{:>4}  {:>11}  {:>7.2}  {:>5}  {:<width$}  {}",
            c.position,
            fmt_probability(c.probability),
            c.cost,
            c.group,
            display_name(c),
            reason
        );
    }
    let (lead, lead_evidence) = super::leading(cx);
    if !lead.is_empty() && !lead_evidence.is_empty() {
        let _ = writeln!(out);
        let _ = writeln!(out, "{}", super::leading_heading(cx, &lead));
        for ev in &lead_evidence {
            let _ = writeln!(out, "  {ev}");
        }
    }
    let shared: Vec<_> = r
        .groups
        .iter()
        .filter(|g| g.members.len() > 1 || g.beyond_table > 0)
        .collect();
    if !shared.is_empty() {
        let _ = writeln!(out);
        let _ = writeln!(
            out,
            "Candidates the data cannot separate (costs within {} of the group's first member):",
            cx.model.ranking.indistinguishable_margin
        );
        for g in shared {
            let members: Vec<String> = g.members.iter().map(|p| format!("#{p}")).collect();
            let more = if g.beyond_table > 0 {
                format!(" and {} more beyond the table (--top)", g.beyond_table)
            } else {
                String::new()
            };
            let _ = writeln!(out, "  group {}: {}{}", g.id, members.join(", "), more);
            if g.evidence.is_empty()
                && g.members.len() > 1
                && r.candidates[g.members[0] - 1].probability >= EVIDENCE_MIN_PROBABILITY
            {
                let _ = writeln!(out, "    no 13C count, multiplicity or J difference separates them: other data are needed (13C shifts, 2D NMR, MS fragments)");
            }
            // Evidence matters for groups that hold real probability; for the
            // rest the table says enough.
            let first_p = r.candidates[g.members[0] - 1].probability;
            if first_p < EVIDENCE_MIN_PROBABILITY {
                continue;
            }
            for ev in g.evidence.iter().take(MAX_EVIDENCE_LINES) {
                let _ = writeln!(out, "    to separate them: {ev}");
            }
        }
    }
    if let Some((v, table)) = super::verdict(cx) {
        let (line, warning) = crate::rank::verdict::describe(&v, &table);
        let _ = writeln!(out);
        let _ = writeln!(out, "{line}");
        if let Some(w) = warning {
            let _ = writeln!(out, "{w}");
        }
    }
    if let Some(n) = cx.explain {
        if let Some(c) = r.candidates.get(n - 1) {
            let _ = writeln!(out);
            out.push_str(&explanation(cx, c));
        }
    }
    let _ = writeln!(out);
    let _ = writeln!(out, "{SAFETY}");
    out
}

pub(crate) fn display_name(c: &Ranked) -> String {
    match &c.name {
        Some(n) => format!("{} ({n})", c.smiles),
        None => c.smiles.clone(),
    }
}

pub(crate) fn header_of(s: &Spectrum) -> String {
    let mut parts = Vec::new();
    if let Some(f) = s.frequency_mhz {
        parts.push(format!("{f} MHz"));
    }
    if let Some(sv) = &s.solvent {
        parts.push(sv.clone());
    }
    if parts.is_empty() {
        String::new()
    } else {
        format!(" (1H NMR, {})", parts.join(", "))
    }
}

pub(crate) fn fmt_dbe(d: f64) -> String {
    if d.fract() == 0.0 {
        format!("{}", d as i64)
    } else {
        format!("{d:.1}")
    }
}

/// Probabilities: three decimals, or scientific for tiny ones.
pub fn fmt_probability(p: f64) -> String {
    if p >= 0.001 {
        format!("{p:.3}")
    } else if p > 0.0 {
        format!("{p:.1e}")
    } else {
        "0".to_string()
    }
}

pub(crate) fn fmt_signal(p: &PredictedSignal) -> String {
    let mut s = format!("{:.2} {} {}H", p.shift, p.multiplicity.label(), p.hydrogens);
    if !p.j_hz.is_empty() {
        let js: Vec<String> = p.j_hz.iter().map(|j| format!("{j:.0}")).collect();
        let _ = write!(s, " J {} Hz", js.join(", "));
    }
    if p.exchangeable {
        s.push_str(" exch.");
    }
    s
}

pub(crate) fn fmt_observed(o: &ObservedMultiplet) -> String {
    let label = if o.pattern.reported {
        o.pattern.label()
    } else {
        "(multiplicity not reported)".to_string()
    };
    let mut s = format!("entry {}: {} {label}", o.entry, o.shift_text());
    if let Some(h) = o.hydrogens {
        if (h - h.round()).abs() < 0.05 {
            let _ = write!(s, " {}H", h.round());
        } else {
            let _ = write!(s, " {h:.1}H");
        }
    }
    if !o.j_hz.is_empty() {
        let js: Vec<String> = o.j_hz.iter().map(|j| format!("{j}")).collect();
        let _ = write!(s, " J {} Hz", js.join(", "));
    }
    s
}

/// The signal-by-signal assignment of one candidate (`--explain N`).
pub fn explanation(cx: &Context, c: &Ranked) -> String {
    let s = cx.spectrum;
    let e: Explanation = score::explain(&c.predicted, s, cx.model, &c.scored);
    let mut out = String::new();
    let _ = writeln!(
        out,
        "Assignment of #{} {} (cost {:.2}; terms are -ln likelihood):",
        c.position,
        display_name(c),
        c.cost
    );
    let pw = c
        .predicted
        .iter()
        .map(|p| fmt_signal(p).len())
        .max()
        .unwrap_or(10)
        .max(9);
    let ow = s
        .multiplets
        .iter()
        .map(|o| fmt_observed(o).len())
        .max()
        .unwrap_or(10)
        .max(8);
    let _ = writeln!(
        out,
        "  {:<pw$}     {:<ow$}  {:>6} {:>6} {:>6}",
        "predicted", "observed", "shift", "mult", "J"
    );
    // Predicted groups in order of their observed multiplet, then unassigned.
    let mut lines: Vec<&score::GroupLine> = e.groups.iter().collect();
    lines.sort_by_key(|l| (l.observed.unwrap_or(usize::MAX), l.group));
    for l in lines {
        let p = &c.predicted[l.group];
        match (l.observed, l.terms) {
            (Some(j), Some(t)) => {
                let _ = writeln!(
                    out,
                    "  {:<pw$}  -> {:<ow$}  {:>6.2} {:>6.2} {:>6.2}",
                    fmt_signal(p),
                    fmt_observed(&s.multiplets[j]),
                    t.shift,
                    // + 0.0: a zero term (-ln 1) prints as 0.00, not -0.00.
                    t.multiplicity + 0.0,
                    t.coupling
                );
            }
            _ => {
                let _ = writeln!(
                    out,
                    "  {:<pw$}  -> {:<ow$}  {:>6.2} (left unassigned{})",
                    fmt_signal(p),
                    "not observed",
                    l.unassigned.unwrap_or(0.0),
                    if p.exchangeable {
                        ", exchangeable H often missing"
                    } else {
                        ""
                    }
                );
            }
        }
    }
    for m in &e.multiplets {
        let o = &s.multiplets[m.observed];
        if m.groups.is_empty() {
            let why = match &o.solvent {
                Some(sp) => format!(
                    "set aside as the {} peak of {} ({})",
                    sp.kind, sp.species, sp.solvent
                ),
                None => "explained by no predicted group".to_string(),
            };
            let _ = writeln!(out, "  {}: {} cost {:.2}", fmt_observed(o), why, m.cost);
        } else if let Some(h) = o.hydrogens {
            let _ = writeln!(
                out,
                "  {}: {} H assigned for {:.1} H observed{}, cost {:.2}",
                fmt_observed(o),
                m.assigned_h,
                h,
                if m.groups.len() > 1 {
                    format!(", {} groups overlap", m.groups.len())
                } else {
                    String::new()
                },
                m.cost
            );
        } else if m.groups.len() > 1 {
            let _ = writeln!(
                out,
                "  {}: {} groups overlap, cost {:.2}",
                fmt_observed(o),
                m.groups.len(),
                m.cost
            );
        }
    }
    if s.multiplets.iter().any(|o| !o.pattern.reported) {
        let _ = writeln!(
            out,
            "  entries without a reported multiplicity have no multiplicity term (mult 0.00)"
        );
    }
    if let (Some(cs), Some(sc)) = (cx.carbon, &c.carbon_scored) {
        out.push_str(&carbon_explanation(cx, cs, c, sc));
        let _ = writeln!(
            out,
            "  total {:.2} ({}1H {:.2} + 13C {:.2})",
            c.cost,
            scale_text(cx),
            e.total,
            sc.cost
        );
    } else {
        let _ = if cx.model.ranking.cost_scale == 1.0 {
            writeln!(out, "  total {:.2}", c.cost)
        } else {
            writeln!(
                out,
                "  total {:.2} ({}1H {:.2})",
                c.cost,
                scale_text(cx),
                e.total
            )
        };
    }
    out
}

fn fmt_line(l: &CarbonLine) -> String {
    let mut s = format!("entry {}: {}", l.entry, l.shift_text());
    if let Some(h) = l.hydrogens {
        let _ = write!(s, " {}", carbon_kind(h));
    }
    if let Some(n) = l.count {
        if n > 1 {
            let _ = write!(s, " {n}C");
        }
    }
    s
}

fn fmt_class(p: &PredictedCarbon) -> String {
    let mut s = format!("{:.1} {}", p.shift, carbon_kind(p.hydrogens));
    if p.carbons > 1 {
        let _ = write!(s, " {}C", p.carbons);
    }
    s
}

/// The 13C part of `--explain`: each carbon class and its line.
/// The cost scale as a factor in front of the parts (empty at 1).
fn scale_text(cx: &Context) -> String {
    let k = cx.model.ranking.cost_scale;
    if k == 1.0 {
        String::new()
    } else {
        format!("cost scale {k} x ")
    }
}

fn carbon_explanation(cx: &Context, cs: &CarbonSpectrum, c: &Ranked, sc: &score::Scored) -> String {
    let e = score::carbon::explain(&c.carbons, cs, cx.model, sc);
    let mut out = String::new();
    let pw = c
        .carbons
        .iter()
        .map(|p| fmt_class(p).len())
        .max()
        .unwrap_or(8)
        .max(9);
    let ow = cs
        .lines
        .iter()
        .map(|l| fmt_line(l).len())
        .max()
        .unwrap_or(8)
        .max(8);
    let _ = writeln!(
        out,
        "  {:<pw$}     {:<ow$}  {:>6} {:>6}",
        "13C class", "13C line", "shift", "H"
    );
    let mut lines: Vec<&score::carbon::ClassLine> = e.classes.iter().collect();
    lines.sort_by_key(|l| (l.observed.unwrap_or(usize::MAX), l.class));
    for l in lines {
        let p = &c.carbons[l.class];
        match (l.observed, l.terms) {
            (Some(j), Some(t)) => {
                let _ = writeln!(
                    out,
                    "  {:<pw$}  -> {:<ow$}  {:>6.2} {:>6.2}",
                    fmt_class(p),
                    fmt_line(&cs.lines[j]),
                    t.shift,
                    t.hydrogens
                );
            }
            _ => {
                let _ = writeln!(
                    out,
                    "  {:<pw$}  -> {:<ow$}  {:>6.2} (left unassigned{})",
                    fmt_class(p),
                    "not observed",
                    l.unassigned.unwrap_or(0.0),
                    if p.hydrogens == 0 {
                        ", quaternary carbons are often weak"
                    } else {
                        ""
                    }
                );
            }
        }
    }
    for a in &e.lines {
        let l = &cs.lines[a.observed];
        if a.classes.is_empty() {
            let why = if l.solvent {
                "set aside as the solvent's own line"
            } else {
                "explained by no predicted class"
            };
            let _ = writeln!(out, "  {}: {} cost {:.2}", fmt_line(l), why, a.cost);
        } else if a.classes.len() > 1 || a.cost > 0.0 {
            let _ = writeln!(
                out,
                "  {}: {} carbon{} in {} class{}, cost {:.2}",
                fmt_line(l),
                a.carbons,
                if a.carbons == 1 { "" } else { "s" },
                a.classes.len(),
                if a.classes.len() == 1 { "" } else { "es" },
                a.cost
            );
        }
    }
    out
}

/// What a two-stage search covered of its first stage, for the partial
/// result's sentence (empty for a one-stage search).
pub fn first_stage_words(first_stage: Option<f64>) -> String {
    match first_stage {
        Some(f) => format!(
            " (searched first, the structures whose carbons all fit the typical 13C regions: {:.2}% of them)",
            f * 100.0
        ),
        None => String::new(),
    }
}
