//! Contour lines by marching squares on a structured (possibly curvilinear)
//! grid: node (i, k) has coordinates `coord(i, k)` and value `value(i, k)`.
//! Crossings are interpolated linearly along cell edges; saddle cells are
//! resolved by the mean of the four corners (Lorensen & Cline 1987 style
//! disambiguation, common practice). Cells with a NaN corner are skipped, so
//! contours stop at undefined regions instead of inventing values there.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

/// An edge between two neighbouring grid nodes as one number that sorts as the
/// pair (low node, high node) does: `2 (i nk + k)` for the edge from the low
/// node (i, k) to (i, k + 1), one more for the edge to (i + 1, k).
type EdgeKey = usize;

fn key(a: (usize, usize), b: (usize, usize), nk: usize) -> EdgeKey {
    let (low, high) = if a <= b { (a, b) } else { (b, a) };
    2 * (low.0 * nk + low.1) + usize::from(high.0 != low.0)
}

/// A hasher for edge keys (small distinct integers): one multiplication, not
/// SipHash (the contour of a map looked up hundreds of edges per draw).
#[derive(Default)]
struct KeyHasher(u64);

impl Hasher for KeyHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0.rotate_left(8) ^ u64::from(b)).wrapping_mul(0x9e37_79b9_7f4a_7c15);
        }
    }
    fn write_usize(&mut self, n: usize) {
        self.0 = (n as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15);
    }
}

type KeyMap<V> = HashMap<EdgeKey, V, BuildHasherDefault<KeyHasher>>;

/// The polylines where the field crosses `level`, in the grid's coordinates.
pub fn marching_squares(
    ni: usize,
    nk: usize,
    coord: impl Fn(usize, usize) -> (f64, f64),
    value: impl Fn(usize, usize) -> f64,
    level: f64,
) -> Vec<Vec<(f64, f64)>> {
    let mut points: KeyMap<(f64, f64)> = KeyMap::default();
    let mut segments: Vec<(EdgeKey, EdgeKey)> = Vec::new();
    if ni < 2 || nk < 2 || !level.is_finite() {
        return Vec::new();
    }
    // Each node once, as one bit: below the level, at or above it, or
    // undefined. A cell is contoured only when its corners' bits together are
    // exactly BELOW | ABOVE (both sides, none undefined); most cells lie
    // wholly on one side and are passed over on one OR and one comparison.
    const BELOW: u8 = 1;
    const ABOVE: u8 = 2;
    const UNDEFINED: u8 = 4;
    const CROSSED: u8 = BELOW | ABOVE;
    let classify = |x: f64| {
        if x.is_nan() {
            UNDEFINED
        } else if x >= level {
            ABOVE
        } else {
            BELOW
        }
    };
    let mut state = Vec::with_capacity(ni * nk);
    for i in 0..ni {
        state.extend((0..nk).map(|k| classify(value(i, k))));
    }
    // The states of both columns of a column pair at each row, ORed: a cell's
    // corners give `pair[k] | pair[k + 1]`. A column pair whose nodes are not
    // on both sides of the level has no crossed cell and is passed over whole.
    let mut pair = vec![0u8; nk];
    for i in 0..ni - 1 {
        let (this, next) = (
            &state[i * nk..(i + 1) * nk],
            &state[(i + 1) * nk..(i + 2) * nk],
        );
        for ((p, a), b) in pair.iter_mut().zip(this).zip(next) {
            *p = a | b;
        }
        if pair.iter().fold(0, |all, p| all | p) & CROSSED != CROSSED {
            continue;
        }
        for k in 0..nk - 1 {
            if pair[k] | pair[k + 1] != CROSSED {
                continue;
            }
            let c = [(i, k), (i + 1, k), (i + 1, k + 1), (i, k + 1)];
            let v = c.map(|(a, b)| value(a, b));
            let case = v
                .iter()
                .enumerate()
                .fold(0usize, |acc, (n, &x)| acc | (usize::from(x >= level) << n));
            // Edge e joins corner e and corner (e + 1) % 4.
            let mut edge = |e: usize| -> EdgeKey {
                let (a, b) = (c[e], c[(e + 1) % 4]);
                let k = key(a, b, nk);
                points.entry(k).or_insert_with(|| {
                    let (va, vb) = (v[e], v[(e + 1) % 4]);
                    let t = ((level - va) / (vb - va)).clamp(0.0, 1.0);
                    let (pa, pb) = (coord(a.0, a.1), coord(b.0, b.1));
                    (pa.0 + t * (pb.0 - pa.0), pa.1 + t * (pb.1 - pa.1))
                });
                k
            };
            let centre_above = v.iter().sum::<f64>() / 4.0 >= level;
            let pairs: &[(usize, usize)] = match case {
                1 | 14 => &[(3, 0)],
                2 | 13 => &[(0, 1)],
                3 | 12 => &[(3, 1)],
                4 | 11 => &[(1, 2)],
                6 | 9 => &[(0, 2)],
                7 | 8 => &[(3, 2)],
                5 => {
                    if centre_above {
                        &[(0, 1), (2, 3)]
                    } else {
                        &[(3, 0), (1, 2)]
                    }
                }
                10 => {
                    if centre_above {
                        &[(3, 0), (1, 2)]
                    } else {
                        &[(0, 1), (2, 3)]
                    }
                }
                _ => &[],
            };
            for &(a, b) in pairs {
                let ka = edge(a);
                let kb = edge(b);
                segments.push((ka, kb));
            }
        }
    }
    join(&segments, &points)
}

/// Join segments sharing edge points into polylines: open chains first (from
/// their loose ends), then closed loops.
fn join(segments: &[(EdgeKey, EdgeKey)], points: &KeyMap<(f64, f64)>) -> Vec<Vec<(f64, f64)>> {
    let mut at: KeyMap<Vec<usize>> = KeyMap::default();
    for (n, (a, b)) in segments.iter().enumerate() {
        at.entry(*a).or_default().push(n);
        at.entry(*b).or_default().push(n);
    }
    let mut used = vec![false; segments.len()];
    let mut lines = Vec::new();
    let mut starts: Vec<EdgeKey> = at
        .iter()
        .filter(|(_, s)| s.len() == 1)
        .map(|(k, _)| *k)
        .collect();
    starts.sort();
    let mut all: Vec<EdgeKey> = segments.iter().map(|s| s.0).collect();
    all.sort();
    for start in starts.into_iter().chain(all) {
        let mut current = start;
        let mut line = vec![points[&current]];
        while let Some(&n) = at[&current].iter().find(|&&n| !used[n]) {
            used[n] = true;
            let (a, b) = segments[n];
            current = if a == current { b } else { a };
            line.push(points[&current]);
        }
        if line.len() > 1 {
            lines.push(line);
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Edge keys sort as the (low node, high node) pairs they stand for, so the
    /// contour's lines start and join in the order they always did.
    #[test]
    fn edge_keys_sort_as_node_pairs() {
        let (ni, nk) = (6, 5);
        let mut edges = Vec::new();
        for i in 0..ni {
            for k in 0..nk {
                if k + 1 < nk {
                    edges.push(((i, k), (i, k + 1)));
                }
                if i + 1 < ni {
                    edges.push(((i + 1, k), (i, k)));
                }
            }
        }
        let pair = |(a, b): ((usize, usize), (usize, usize))| if a <= b { (a, b) } else { (b, a) };
        for &e in &edges {
            for &f in &edges {
                assert_eq!(
                    key(e.0, e.1, nk).cmp(&key(f.0, f.1, nk)),
                    pair(e).cmp(&pair(f)),
                    "{e:?} {f:?}"
                );
            }
        }
    }

    #[test]
    fn circle_contour_is_closed_and_round() {
        // f = x^2 + y^2 on a 41 x 41 grid over [-2, 2]^2; the level 1 is the unit circle.
        let n = 41;
        let c = |i: usize, k: usize| (-2.0 + 4.0 * i as f64 / 40.0, -2.0 + 4.0 * k as f64 / 40.0);
        let lines = marching_squares(
            n,
            n,
            c,
            |i, k| {
                let (x, y) = c(i, k);
                x * x + y * y
            },
            1.0,
        );
        assert_eq!(lines.len(), 1);
        let line = &lines[0];
        assert_eq!(line.first(), line.last(), "closed loop");
        for &(x, y) in line {
            // Linear interpolation across cells 0.1 wide errs by at most about h^2/8 = 0.00125 (relative).
            assert!(((x * x + y * y).sqrt() - 1.0).abs() < 0.01, "{x} {y}");
        }
    }

    #[test]
    fn nan_cells_break_the_contour() {
        // f = x on a 5 x 3 grid with the middle column undefined: the x = 0.5 line
        // survives only in cells without NaN corners.
        let lines = marching_squares(
            5,
            3,
            |i, k| (i as f64, k as f64),
            |i, _| if i == 2 { f64::NAN } else { i as f64 },
            0.5,
        );
        assert_eq!(lines.len(), 1);
        assert!(lines[0].iter().all(|p| (p.0 - 0.5).abs() < 1e-12));
    }
}
