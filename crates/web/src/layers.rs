//! Which part of a chart's display list is drawn on which of its three stacked
//! canvases, so that an edit replays only what it changed (docs/page.md "Draw
//! only what changed"). Plain Rust, so it is tested natively.
//!
//! A view on the page is three canvases of the same size, composited by the
//! browser in this order (web/index.html `.layered`): the layer under the
//! chart (`ID-under`) holds the list's "back", a prefix; the chart canvas
//! (`ID`) the middle; the layer over it (`ID-over`) the "front", a suffix.
//! After an edit the new list is compared with the one the canvases show: when
//! it still starts with the back and ends with the front, only the middle is
//! replayed, on the chart canvas alone (the fast path); otherwise the three
//! canvases are drawn again, with the back and front chosen as the parts the
//! two lists share (the common prefix and suffix), so that the next similar
//! edit takes the fast path. Drawing the list in three parts on three
//! canvases gives the picture of drawing it on one, up to the rounding of
//! anti-aliased pixels blended twice (docs/page.md).
//!
//! A map's cells (an opaque image) that open the middle go on the layer under
//! the chart, over the back, with one `putImageData`: an opaque image drawn
//! over the back replaces the pixels there, which is what `putImageData` does;
//! on the next edit a new image of the same rectangle is put over the old one,
//! leaving the rest of the layer (the back) as it is.

use std::ops::Range;

use crate::display::{run_length, Op};

/// The canvas a part of the list is drawn on; `web/replay.js` reads the same numbers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Layer {
    /// `ID-under`, below the chart canvas.
    Under = 0,
    /// The chart canvas `ID`.
    Chart = 1,
    /// `ID-over`, above the chart canvas.
    Over = 2,
}

/// What the three canvases of a view hold (kept between draws).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Layers {
    /// The back: the list's first `back` operations, on the layer under the chart.
    pub back: usize,
    /// The front: the list's last `front` operations, on the layer over the chart.
    pub front: usize,
    /// The rectangle (x, y, width, height) of an opaque image put on the layer
    /// under the chart over the back (the first operation of the middle).
    pub image: Option<(i32, i32, u32, u32)>,
}

/// One part of the list drawn on one canvas.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Part {
    /// Where it is drawn.
    pub layer: Layer,
    /// Whether the canvas is cleared first.
    pub clear: bool,
    /// The operations, a range of the list.
    pub ops: Range<usize>,
}

/// How to draw a list on a view's three canvases.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Plan {
    /// The parts, in list order (each starts where the one before ends).
    pub parts: Vec<Part>,
    /// What the canvases hold afterwards.
    pub layers: Layers,
    /// Whether the list is the one the canvases show (nothing to draw; `parts` empty).
    pub unchanged: bool,
    /// Whether the back and front layers are drawn again (not the fast path).
    pub full: bool,
    /// The operation, an opaque image (checked here), put on the layer under
    /// the chart with `putImageData`: the last of its part. Any other image
    /// is drawn with `drawImage`.
    pub put: Option<usize>,
}

/// Whether `at` is not inside a run of operations drawn as one canvas call
/// ([`run_length`]): splitting a run would stroke or fill it as two paths.
fn boundary(ops: &[Op], at: usize) -> bool {
    at == 0 || at >= ops.len() || run_length(&ops[at - 1..=at], 0) == 1
}

/// The rectangle of `op` when it is an image every pixel of which is opaque:
/// known by construction (a map's cells), else checked pixel by pixel.
fn opaque_image(op: Option<&Op>) -> Option<(i32, i32, u32, u32)> {
    match op {
        Some(Op::Image {
            at,
            width,
            height,
            rgba,
            opaque,
        }) if *opaque || crate::commands::opaque(rgba) => Some((at.0, at.1, *width, *height)),
        _ => None,
    }
}

/// The lengths of the common prefix and suffix of `a` and `b`, not overlapping
/// in either (`prefix + suffix <= min(a.len(), b.len())`).
pub fn common(a: &[Op], b: &[Op]) -> (usize, usize) {
    let n = a.len().min(b.len());
    let prefix = a.iter().zip(b).take_while(|(x, y)| x == y).count();
    let suffix = a[prefix..]
        .iter()
        .rev()
        .zip(b[prefix..].iter().rev())
        .take(n - prefix)
        .take_while(|(x, y)| x == y)
        .count();
    (prefix, suffix)
}

/// The plan to draw `ops` on a view whose canvases show `previous` (the list
/// drawn last and what the layers hold), or `None` when they show nothing
/// usable (first draw, another size, theme or pixel ratio, or no layers).
pub fn plan(previous: Option<(&[Op], Layers)>, ops: &[Op]) -> Plan {
    let len = ops.len();
    if let Some((old, held)) = previous {
        let (back, front) = (held.back, held.front);
        if back + front <= len
            && back + front <= old.len()
            && boundary(ops, back)
            && boundary(ops, len - front)
            && ops[..back] == old[..back]
            && ops[len - front..] == old[old.len() - front..]
        {
            if len == old.len() && ops[back..len - front] == old[back..len - front] {
                return Plan {
                    parts: Vec::new(),
                    layers: held,
                    unchanged: true,
                    full: false,
                    put: None,
                };
            }
            return fast(ops, held);
        }
        let (mut p, mut s) = common(old, ops);
        while !boundary(ops, p) {
            p -= 1;
        }
        while !boundary(ops, len - s) {
            s -= 1;
        }
        return full(ops, p, s);
    }
    full(ops, 0, 0)
}

/// Only the middle is drawn again (the back and front are still right).
fn fast(ops: &[Op], held: Layers) -> Plan {
    let middle = held.back..ops.len() - held.front;
    let image = opaque_image(ops[middle.clone()].first());
    let mut parts = Vec::with_capacity(2);
    let mut start = middle.start;
    match (image, held.image) {
        // The layer holds the back (and an image of the same rectangle): the new one covers it.
        (Some(rect), old) if old.is_none() || old == Some(rect) => {
            parts.push(Part {
                layer: Layer::Under,
                clear: false,
                ops: start..start + 1,
            });
            start += 1;
        }
        // An image elsewhere, or none where the layer holds one: the layer is drawn again.
        (Some(_), _) => {
            parts.push(Part {
                layer: Layer::Under,
                clear: true,
                ops: 0..start + 1,
            });
            start += 1;
        }
        (None, Some(_)) => parts.push(Part {
            layer: Layer::Under,
            clear: true,
            ops: 0..start,
        }),
        (None, None) => {}
    }
    parts.push(Part {
        layer: Layer::Chart,
        clear: true,
        ops: start..middle.end,
    });
    Plan {
        parts,
        layers: Layers { image, ..held },
        unchanged: false,
        full: false,
        put: image.map(|_| middle.start),
    }
}

/// The three canvases drawn again, with the first `shared_back` and last
/// `shared_front` operations (shared with the list drawn before) as back and
/// front; when the two lists share nothing (or there was none), the whole
/// list is the back, so that the next list can be split against it.
fn full(ops: &[Op], shared_back: usize, shared_front: usize) -> Plan {
    let len = ops.len();
    let (back, front) = if shared_back + shared_front == 0 {
        (len, 0)
    } else {
        (shared_back, shared_front)
    };
    let image = opaque_image(ops[back..len - front].first());
    let under = back + usize::from(image.is_some());
    Plan {
        parts: vec![
            Part {
                layer: Layer::Under,
                clear: true,
                ops: 0..under,
            },
            Part {
                layer: Layer::Chart,
                clear: true,
                ops: under..len - front,
            },
            Part {
                layer: Layer::Over,
                clear: true,
                ops: len - front..len,
            },
        ],
        layers: Layers { back, front, image },
        unchanged: false,
        full: true,
        put: image.map(|_| back),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::display::Colour;

    fn colour(r: u8) -> Colour {
        Colour {
            rgb: (r, 0, 0),
            alpha: 1.0,
        }
    }

    fn rect(r: u8, x: i32) -> Op {
        Op::FillRect {
            colour: colour(r),
            corners: [(x, 0), (x + 1, 1)],
        }
    }

    fn stroke(r: u8, y: f64) -> Op {
        Op::Stroke {
            colour: colour(r),
            width: 1,
            points: vec![(0.0, y), (1.0, y)],
            lengths: vec![2],
        }
    }

    fn image(x: i32, fill: u8, alpha: u8) -> Op {
        Op::Image {
            at: (x, 0),
            width: 2,
            height: 1,
            rgba: vec![fill, fill, fill, alpha, fill, fill, fill, alpha],
            // Not known: the plan checks the pixels.
            opaque: false,
        }
    }

    /// Draws `plan` of `ops` on three "canvases" (lists of the operations each
    /// shows, an image replacing what the layer held in its rectangle only in
    /// the sense that it is the layer's last operation), checking that the
    /// parts cover the list in order.
    fn apply(canvases: &mut [Vec<Op>; 3], ops: &[Op], plan: &Plan) {
        let mut at = plan.parts.first().map_or(0, |p| p.ops.start);
        for part in &plan.parts {
            assert_eq!(part.ops.start, at, "{plan:?}");
            at = part.ops.end;
            let c = &mut canvases[part.layer as usize];
            if part.clear {
                c.clear();
            } else if let Some(Op::Image { at: a, .. }) = ops.get(part.ops.start) {
                // An image put without clearing replaces the image of its rectangle.
                let same = matches!(c.last(), Some(Op::Image { at: b, .. }) if b == a);
                if same {
                    c.pop();
                }
            }
            c.extend_from_slice(&ops[part.ops.clone()]);
        }
    }

    /// The three canvases, stacked, show the list in order.
    fn shown(canvases: &[Vec<Op>; 3]) -> Vec<Op> {
        canvases.concat()
    }

    #[test]
    fn the_first_list_goes_on_the_back_and_a_change_in_the_middle_is_a_fast_path() {
        let a = vec![rect(1, 0), stroke(2, 0.0), stroke(3, 1.0), rect(4, 5)];
        let mut canvases: [Vec<Op>; 3] = Default::default();
        let first = plan(None, &a);
        assert!(first.full);
        assert_eq!(first.layers.back, 4);
        apply(&mut canvases, &a, &first);
        assert_eq!(shown(&canvases), a);

        // The middle stroke changes: the three canvases are split along the shared parts.
        let b = vec![rect(1, 0), stroke(2, 0.0), stroke(3, 2.0), rect(4, 5)];
        let second = plan(Some((&a, first.layers)), &b);
        assert!(second.full);
        assert_eq!((second.layers.back, second.layers.front), (2, 1));
        apply(&mut canvases, &b, &second);
        assert_eq!(shown(&canvases), b);

        // The same part changes again: only the middle, on the chart canvas.
        let c = vec![
            rect(1, 0),
            stroke(2, 0.0),
            stroke(3, 3.0),
            stroke(3, 4.0),
            rect(4, 5),
        ];
        let third = plan(Some((&b, second.layers)), &c);
        assert!(!third.full && !third.unchanged);
        assert_eq!(
            third.parts,
            vec![Part {
                layer: Layer::Chart,
                clear: true,
                ops: 2..4
            }]
        );
        apply(&mut canvases, &c, &third);
        assert_eq!(shown(&canvases), c);

        // The same list: nothing to draw.
        let same = plan(Some((&c, third.layers)), &c);
        assert!(same.unchanged && same.parts.is_empty());

        // A change in the back: all three again.
        let d = vec![rect(9, 0), stroke(2, 0.0), stroke(3, 3.0), rect(4, 5)];
        let fourth = plan(Some((&c, third.layers)), &d);
        assert!(fourth.full);
        assert_eq!((fourth.layers.back, fourth.layers.front), (0, 1));
        apply(&mut canvases, &d, &fourth);
        assert_eq!(shown(&canvases), d);
    }

    #[test]
    fn a_split_never_cuts_a_run_of_one_pen() {
        // Strokes of one pen are one path: the shared prefix (3) would cut the run of colour 2.
        let a = vec![rect(1, 0), stroke(2, 0.0), stroke(2, 1.0), stroke(2, 2.0)];
        let b = vec![rect(1, 0), stroke(2, 0.0), stroke(2, 1.0), stroke(2, 5.0)];
        let first = plan(None, &a);
        let second = plan(Some((&a, first.layers)), &b);
        assert_eq!((second.layers.back, second.layers.front), (1, 0));
        // A stored back that would cut a run of the new list is not reused.
        let held = Layers {
            back: 2,
            front: 0,
            image: None,
        };
        let p = plan(Some((&b, held)), &b);
        assert!(p.full);
        for part in &p.parts {
            assert!(boundary(&b, part.ops.start) && boundary(&b, part.ops.end));
        }
    }

    #[test]
    fn common_parts_do_not_overlap() {
        let a = vec![rect(1, 0), rect(1, 0), rect(1, 0)];
        let b = vec![rect(1, 0), rect(1, 0)];
        assert_eq!(common(&a, &b), (2, 0));
        let c = vec![rect(1, 0), rect(2, 0), rect(1, 0)];
        assert_eq!(common(&a, &c), (1, 1));
        assert_eq!(common(&[], &c), (0, 0));
    }

    #[test]
    fn an_opaque_image_opening_the_middle_goes_under_the_chart() {
        // A map: cells first, then what is drawn around and over them.
        let a = vec![image(0, 10, 255), rect(1, 3), stroke(2, 0.0), rect(4, 5)];
        let mut canvases: [Vec<Op>; 3] = Default::default();
        let first = plan(None, &a);
        apply(&mut canvases, &a, &first);
        let b = vec![image(0, 20, 255), rect(1, 3), stroke(2, 1.0), rect(4, 5)];
        let second = plan(Some((&a, first.layers)), &b);
        assert!(second.full);
        assert_eq!(second.layers.image, Some((0, 0, 2, 1)));
        assert_eq!(second.parts[0].ops, 0..1);
        assert_eq!(second.put, Some(0));
        apply(&mut canvases, &b, &second);
        assert_eq!(shown(&canvases), b);
        // New cells of the same rectangle: put over the old ones, nothing cleared under.
        let c = vec![image(0, 30, 255), rect(1, 3), stroke(2, 2.0), rect(4, 5)];
        let third = plan(Some((&b, second.layers)), &c);
        assert!(!third.full);
        assert_eq!(
            third.parts[0],
            Part {
                layer: Layer::Under,
                clear: false,
                ops: 0..1
            }
        );
        apply(&mut canvases, &c, &third);
        assert_eq!(shown(&canvases), c);
        // Cells elsewhere: the layer under is drawn again (back, then the image).
        let d = vec![image(1, 30, 255), rect(1, 3), stroke(2, 3.0), rect(4, 5)];
        let fourth = plan(Some((&c, third.layers)), &d);
        assert!(!fourth.full);
        assert!(fourth.parts[0].clear);
        apply(&mut canvases, &d, &fourth);
        assert_eq!(shown(&canvases), d);
        // A translucent image stays on the chart canvas, and the layer under loses the old one.
        let e = vec![image(1, 30, 128), rect(1, 3), stroke(2, 3.0), rect(4, 5)];
        let fifth = plan(Some((&d, fourth.layers)), &e);
        assert_eq!(fifth.layers.image, None);
        assert_eq!(fifth.put, None);
        assert_eq!(
            fifth.parts[0],
            Part {
                layer: Layer::Under,
                clear: true,
                ops: 0..0
            }
        );
        apply(&mut canvases, &e, &fifth);
        assert_eq!(shown(&canvases), e);
    }
}
