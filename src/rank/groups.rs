//! Candidates the data cannot separate: consecutive ranked candidates whose
//! costs lie within `indistinguishable_margin` (scoring.toml) of the first
//! member of their group form one group.
//!
//! Why anchored on the first member rather than chained pairwise: a chain of
//! small steps could otherwise join candidates whose costs differ by much
//! more than the margin.

/// Group number (1-based) of each cost in an ascending list.
pub fn group_ids(costs: &[f64], margin: f64) -> Vec<usize> {
    let mut ids = Vec::with_capacity(costs.len());
    let mut id = 0;
    let mut anchor = f64::NEG_INFINITY;
    for &c in costs {
        if ids.is_empty() || c - anchor > margin {
            id += 1;
            anchor = c;
        }
        ids.push(id);
    }
    ids
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn groups_are_anchored_on_their_first_member() {
        assert_eq!(
            group_ids(&[1.0, 1.5, 1.9, 2.2, 5.0], 1.0),
            vec![1, 1, 1, 2, 3]
        );
        assert_eq!(group_ids(&[], 1.0), Vec::<usize>::new());
    }
}
