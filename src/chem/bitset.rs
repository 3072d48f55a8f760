//! Vertex sets of graphs of at most 64 atoms as `u64` bitsets (bit i = atom i),
//! the compact form used by the generator's hot path and the predictor's view.

/// Iterate the set bits of a mask, lowest first.
pub fn bits(mut m: u64) -> impl Iterator<Item = usize> {
    std::iter::from_fn(move || {
        if m == 0 {
            None
        } else {
            let i = m.trailing_zeros() as usize;
            m &= m - 1;
            Some(i)
        }
    })
}
