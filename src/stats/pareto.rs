//! The Pareto front of points in two coordinates, both to be minimised.

/// Indices of the non-dominated points when both coordinates are to be minimised, ordered by
/// the first coordinate (ties by the second, then by index).
///
/// A point is dominated when another is no worse in both coordinates and better in at least
/// one; equal points therefore do not dominate each other and are all kept. Points with a NaN
/// coordinate are never on the front and never dominate. The test is the definition itself,
/// O(n²): fronts here have at most a few hundred points.
pub fn pareto_front(points: &[(f64, f64)]) -> Vec<usize> {
    let valid = |p: &(f64, f64)| !p.0.is_nan() && !p.1.is_nan();
    let dominates =
        |a: &(f64, f64), b: &(f64, f64)| a.0 <= b.0 && a.1 <= b.1 && (a.0 < b.0 || a.1 < b.1);
    let mut front: Vec<usize> = (0..points.len())
        .filter(|&i| {
            valid(&points[i]) && !points.iter().any(|q| valid(q) && dominates(q, &points[i]))
        })
        .collect();
    front.sort_by(|&a, &b| {
        points[a]
            .0
            .total_cmp(&points[b].0)
            .then(points[a].1.total_cmp(&points[b].1))
            .then(a.cmp(&b))
    });
    front
}

#[cfg(test)]
mod tests {
    use super::pareto_front;

    // Source: hand-made case. (1,5) (2,3) (3,4) (4,1) (2,3) (5,5) (NaN,0):
    // (3,4) is dominated by (2,3); (5,5) by everything left of it; the two (2,3) tie and are
    // both kept; the NaN point is ignored.
    #[test]
    fn front_of_hand_made_case() {
        let pts = [
            (1.0, 5.0),
            (2.0, 3.0),
            (3.0, 4.0),
            (4.0, 1.0),
            (2.0, 3.0),
            (5.0, 5.0),
            (f64::NAN, 0.0),
        ];
        assert_eq!(pareto_front(&pts), vec![0, 1, 4, 3]);
    }

    // Source: definition of dominance; equal x with lower y dominates.
    #[test]
    fn same_mass_lower_loss_dominates() {
        assert_eq!(pareto_front(&[(1.0, 2.0), (1.0, 1.0)]), vec![1]);
        assert_eq!(pareto_front(&[]), Vec::<usize>::new());
        assert_eq!(pareto_front(&[(3.0, 3.0)]), vec![0]);
    }

    /// An independent algorithm (the sorted sweep, "skyline"): after sorting by (x, y), a
    /// point is non-dominated exactly when its y is the smallest of its x group and strictly
    /// below every y of smaller x. Compared with the definition on 500 pseudo-random point
    /// sets drawn on a coarse grid, so that ties in x, in y and whole duplicates are common.
    #[test]
    fn front_equals_an_independent_sorted_sweep() {
        // xorshift64 (Marsaglia 2003): any fixed sequence will do.
        let mut state = 0x9e37_79b9_7f4a_7c15u64;
        let mut next = |m: u64| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state % m
        };
        for case in 0..500 {
            let n = 1 + next(25) as usize;
            let pts: Vec<(f64, f64)> = (0..n)
                .map(|_| {
                    let x = next(8) as f64;
                    let y = if next(20) == 0 {
                        f64::NAN
                    } else {
                        next(8) as f64 * 0.125
                    };
                    (x, y)
                })
                .collect();
            let mut order: Vec<usize> = (0..n).filter(|&i| !pts[i].1.is_nan()).collect();
            order.sort_by(|&a, &b| {
                pts[a]
                    .0
                    .total_cmp(&pts[b].0)
                    .then(pts[a].1.total_cmp(&pts[b].1))
                    .then(a.cmp(&b))
            });
            let mut expected = Vec::new();
            let mut below = f64::INFINITY; // smallest y over strictly smaller x
            let mut k = 0;
            while k < order.len() {
                let x = pts[order[k]].0;
                let group: Vec<usize> = order[k..]
                    .iter()
                    .copied()
                    .take_while(|&i| pts[i].0 == x)
                    .collect();
                let ymin = pts[group[0]].1;
                if ymin < below {
                    expected.extend(group.iter().copied().filter(|&i| pts[i].1 == ymin));
                }
                below = below.min(ymin);
                k += group.len();
            }
            assert_eq!(pareto_front(&pts), expected, "case {case}: {pts:?}");
        }
    }
}
