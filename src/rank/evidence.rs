//! What extra evidence would separate candidates the 1H data cannot: the
//! number of 13C signals (one per symmetry class of carbon atoms), a
//! predicted multiplicity one candidate has and another lacks, and a
//! coupling constant that differs.

use crate::predict::PredictedSignal;

/// What the evidence finder needs of one group member.
pub struct Member<'a> {
    /// How the member is named in the output (`#3 CCOC(C)=O`).
    pub label: String,
    pub predicted: &'a [PredictedSignal],
    /// Number of expected 13C signals (carbon symmetry classes), if known.
    pub carbon_signals: Option<usize>,
}

/// Couplings at least this large are resolved in a routine spectrum; smaller
/// ones are not worth proposing as evidence (common practice).
const RESOLVED_J_HZ: f64 = 3.0;
/// Predicted J closer than this do not separate candidates (handbook ranges
/// overlap by about that much; common practice).
const J_SEPARATION_HZ: f64 = 3.0;

/// What the observed data already give: evidence of these kinds is not
/// proposed again (measuring J is no advice when J was reported).
#[derive(Clone, Copy, Debug, Default)]
pub struct Given {
    /// The data report at least one coupling constant.
    pub j: bool,
}

impl Given {
    pub fn of(spectrum: &crate::spectrum::Spectrum) -> Given {
        Given {
            j: spectrum.multiplets.iter().any(|o| !o.j_hz.is_empty()),
        }
    }
}

/// Sentences saying what would tell the members apart (empty when nothing
/// in these three kinds of evidence does).
pub fn separating_evidence(members: &[Member]) -> Vec<String> {
    separating_evidence_given(members, Given::default())
}

/// [`separating_evidence`] without the kinds of evidence the data already
/// give.
pub fn separating_evidence_given(members: &[Member], given: Given) -> Vec<String> {
    let mut out = Vec::new();
    if members.len() < 2 {
        return out;
    }
    // 13C signal count.
    let counts: Vec<Option<usize>> = members.iter().map(|m| m.carbon_signals).collect();
    if counts.iter().all(Option::is_some) {
        let mut distinct: Vec<usize> = counts.iter().flatten().copied().collect();
        distinct.sort_unstable();
        distinct.dedup();
        if distinct.len() > 1 {
            let parts: Vec<String> = members
                .iter()
                .map(|m| format!("{} {}", m.label, m.carbon_signals.unwrap_or(0)))
                .collect();
            out.push(format!(
                "13C NMR: number of carbon signals expected (carbon symmetry classes): {}",
                parts.join(", ")
            ));
        } else {
            out.push(format!(
                "13C NMR signal count does not help: {} carbon signals expected for each",
                distinct[0]
            ));
        }
    }
    // Multiplicities: compare the (H count, pattern) lists with the first.
    let first = &members[0];
    let sig = |p: &[PredictedSignal]| {
        let mut v: Vec<(u32, String)> = p
            .iter()
            .map(|s| (s.hydrogens, s.multiplicity.label()))
            .collect();
        v.sort();
        v
    };
    let a = sig(first.predicted);
    for m in &members[1..] {
        let b = sig(m.predicted);
        let only_a: Vec<String> = minus(&a, &b)
            .iter()
            .map(|(h, l)| format!("{h}H {l}"))
            .collect();
        let only_b: Vec<String> = minus(&b, &a)
            .iter()
            .map(|(h, l)| format!("{h}H {l}"))
            .collect();
        if !only_a.is_empty() || !only_b.is_empty() {
            out.push(format!(
                "multiplicity: {} predicts {} where {} predicts {}",
                first.label,
                or_none(&only_a),
                m.label,
                or_none(&only_b)
            ));
        }
        // Coupling constants (unless the data give J already).
        if given.j {
            continue;
        }
        let ja = resolved_j(first.predicted);
        let jb = resolved_j(m.predicted);
        let differs = |x: &[f64], y: &[f64]| {
            x.iter()
                .find(|&&j| y.iter().all(|&k| (j - k).abs() >= J_SEPARATION_HZ))
                .copied()
        };
        if let Some(j) = differs(&ja, &jb).or_else(|| differs(&jb, &ja)) {
            out.push(format!(
                "coupling constant: a J of about {j:.0} Hz is expected for {} but not for {} (measure J)",
                if ja.contains(&j) { &first.label } else { &m.label },
                if ja.contains(&j) { &m.label } else { &first.label },
            ));
        }
    }
    out
}

fn resolved_j(p: &[PredictedSignal]) -> Vec<f64> {
    p.iter()
        .flat_map(|s| s.j_hz.iter().copied())
        .filter(|j| j.abs() >= RESOLVED_J_HZ)
        .map(f64::abs)
        .collect()
}

/// Multiset difference a - b of sorted lists.
fn minus(a: &[(u32, String)], b: &[(u32, String)]) -> Vec<(u32, String)> {
    let mut rest = b.to_vec();
    let mut out = Vec::new();
    for x in a {
        if let Some(i) = rest.iter().position(|y| y == x) {
            rest.remove(i);
        } else {
            out.push(x.clone());
        }
    }
    out
}

fn or_none(v: &[String]) -> String {
    if v.is_empty() {
        "nothing else".to_string()
    } else {
        v.join(", ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::predict::Multiplicity;

    fn sig(h: u32, m: Multiplicity, j: &[f64]) -> PredictedSignal {
        PredictedSignal {
            shift: 1.0,
            sigma: 0.2,
            hydrogens: h,
            multiplicity: m,
            j_hz: j.to_vec(),
            atoms: vec![],
            exchangeable: false,
            notes: vec![],
        }
    }

    #[test]
    fn cis_and_trans_alkenes_are_told_apart_by_j() {
        // Vinyl trans J 12-18 Hz, cis 6-12 Hz (FIELD-GUIDE 4, common practice).
        let d = || Multiplicity::Coupled(vec![1]);
        let trans = [sig(1, d(), &[16.0]), sig(1, d(), &[16.0])];
        let cis = [sig(1, d(), &[10.0]), sig(1, d(), &[10.0])];
        let ev = separating_evidence(&[
            Member {
                label: "#1".into(),
                predicted: &trans,
                carbon_signals: Some(2),
            },
            Member {
                label: "#2".into(),
                predicted: &cis,
                carbon_signals: Some(2),
            },
        ]);
        assert!(ev.iter().any(|e| e.contains("J of about 16 Hz")), "{ev:?}");
        assert!(ev.iter().any(|e| e.contains("does not help")), "{ev:?}");
    }

    #[test]
    fn no_j_advice_when_j_was_given() {
        // The same trans/cis pair: with J reported, J is no advice.
        let d = || Multiplicity::Coupled(vec![1]);
        let trans = [sig(1, d(), &[16.0]), sig(1, d(), &[16.0])];
        let cis = [sig(1, d(), &[10.0]), sig(1, d(), &[10.0])];
        let members = [("#1", &trans[..]), ("#2", &cis[..])].map(|(label, predicted)| Member {
            label: label.into(),
            predicted,
            carbon_signals: Some(2),
        });
        let ev = separating_evidence_given(&members, Given { j: true });
        assert!(!ev.iter().any(|e| e.contains("J of about")), "{ev:?}");
        assert!(ev.iter().any(|e| e.contains("does not help")), "{ev:?}");
    }

    #[test]
    fn carbon_counts_and_multiplicities_differ() {
        let a = [sig(3, Multiplicity::Coupled(vec![2]), &[7.0])];
        let b = [sig(3, Multiplicity::Coupled(vec![1]), &[7.0])];
        let ev = separating_evidence(&[
            Member {
                label: "#1".into(),
                predicted: &a,
                carbon_signals: Some(4),
            },
            Member {
                label: "#2".into(),
                predicted: &b,
                carbon_signals: Some(3),
            },
        ]);
        assert!(ev[0].contains("#1 4, #2 3"), "{ev:?}");
        assert!(ev[1].contains("3H t") && ev[1].contains("3H d"), "{ev:?}");
    }
}
