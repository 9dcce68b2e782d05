//! Where the Monte Carlo chart writes the labels of its vertical lines (the percentiles and the
//! point estimate): in rows above the bars, each beside its own line, so that no two labels
//! overlap and none leaves the plot, and, where the places allow it, no line runs through
//! another line's label.
//!
//! Lines close together (a narrow distribution on an axis that also spans a distant point
//! estimate, say) once put their labels on top of one another. Each label now takes the first
//! free place from its chart's choice: its own row and side, the other side, then the other
//! rows. There are as many rows as labels, so a label always finds a row of its own.

/// Which side of its line a label stands on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    Left,
    Right,
}

impl Side {
    fn other(self) -> Side {
        match self {
            Side::Left => Side::Right,
            Side::Right => Side::Left,
        }
    }
}

/// A line to label, in pixels: its x, its label's estimated width, and the row (0 the top) and
/// side the chart would choose.
#[derive(Debug, Clone, Copy)]
pub struct Wanted {
    pub x: i32,
    pub width: i32,
    pub row: usize,
    pub side: Side,
}

/// Where a label is drawn: its row and its side of the line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Place {
    pub row: usize,
    pub side: Side,
}

/// Space between a line and its label, in pixels.
pub const OFFSET: i32 = 5;
/// Clear space between two labels on a row, in pixels (the estimated widths are generous:
/// frame.rs).
const GAP: i32 = 2;

/// The horizontal pixels a label of `width` takes beside a line at `x`.
pub fn extent(x: i32, width: i32, side: Side) -> (i32, i32) {
    match side {
        Side::Left => (x - OFFSET - width, x - OFFSET),
        Side::Right => (x + OFFSET, x + OFFSET + width),
    }
}

/// A place for each of `wanted`, in order, in `rows` rows inside the plot's pixels `bounds`:
/// the first of the label's own row and side, its other side, then each other row from the
/// top (its side first) where the label stays inside `bounds` and clear of every label placed
/// before on its row, and where no line through a row above crosses it nor its own line (up to
/// its row) crosses a label placed below. When no place avoids the lines, the first place that
/// meets the rest; when none does (more labels than rows), the label's own.
pub fn place(wanted: &[Wanted], rows: usize, bounds: (i32, i32)) -> Vec<Place> {
    let mut placed: Vec<(Wanted, Place)> = Vec::new();
    for &label in wanted {
        let rows_in_order = std::iter::once(label.row).chain((0..rows).filter(|&r| r != label.row));
        let candidates: Vec<Place> = rows_in_order
            .flat_map(|row| [label.side, label.side.other()].map(|side| Place { row, side }))
            .collect();
        let fits = |p: &Place| inside(label, p, bounds) && clear(label, p, &placed);
        let beside_another = |p: &Place| beside_another(label, p, &placed);
        let crossed = |p: &Place| crossed(label, p, &placed);
        // A label beside another's line misleads a reader more than one a dashed line runs
        // through: it is avoided first.
        let chosen = (candidates.iter())
            .find(|p| fits(p) && !crossed(p) && !beside_another(p))
            .or_else(|| candidates.iter().find(|p| fits(p) && !beside_another(p)))
            .or_else(|| candidates.iter().find(|p| fits(p) && !crossed(p)))
            .or_else(|| candidates.iter().find(|p| fits(p)))
            .copied()
            .unwrap_or(Place {
                row: label.row,
                side: label.side,
            });
        placed.push((label, chosen));
    }
    placed.into_iter().map(|(_, place)| place).collect()
}

fn inside(label: Wanted, place: &Place, (left, right): (i32, i32)) -> bool {
    let (from, to) = extent(label.x, label.width, place.side);
    left <= from && to <= right
}

/// No label placed on the same row within [`GAP`] of this one.
fn clear(label: Wanted, place: &Place, placed: &[(Wanted, Place)]) -> bool {
    let (from, to) = extent(label.x, label.width, place.side);
    placed.iter().all(|(other, at)| {
        let (a, b) = extent(other.x, other.width, at.side);
        at.row != place.row || to + GAP <= a || b + GAP <= from
    })
}

/// Whether another line ends right under this label, on its row, or stands between the label
/// and its own line: the label then reads as that line's (found by review: with the point
/// estimate 8 px left of the median, "median 7.40%" ended above the point estimate's line).
fn beside_another(label: Wanted, place: &Place, placed: &[(Wanted, Place)]) -> bool {
    let (from, to) = extent(label.x, label.width, place.side);
    let (from, to) = (from.min(label.x), to.max(label.x));
    (placed.iter()).any(|(other, at)| {
        at.row == place.row && other.x != label.x && (from..=to).contains(&other.x)
    })
}

/// Whether a line rising to a row above this label's runs through it, or this label's line
/// runs through a label placed on a row below (a line ends under its own label's row).
fn crossed(label: Wanted, place: &Place, placed: &[(Wanted, Place)]) -> bool {
    let (from, to) = extent(label.x, label.width, place.side);
    placed.iter().any(|(other, at)| {
        let (a, b) = extent(other.x, other.width, at.side);
        (at.row < place.row && (from..=to).contains(&other.x))
            || (at.row > place.row && (a..=b).contains(&label.x))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn overlap(a: (i32, i32, usize), b: (i32, i32, usize)) -> bool {
        a.2 == b.2 && a.0 < b.1 && b.0 < a.1
    }

    // Labels 60 to 130 px wide on lines a few pixels apart (the narrow case) and on lines spread
    // across the plot: no two on a row overlap, each stays in the plot's 86 to 696 px.
    #[test]
    fn labels_on_close_lines_take_rows_of_their_own() {
        for xs in [
            [400, 402, 404, 120],
            [100, 300, 500, 690],
            [690, 691, 692, 693],
        ] {
            let wanted: Vec<Wanted> = [(59, 0, Side::Left), (66, 0, Side::Right)]
                .into_iter()
                .chain([(132, 0, Side::Right), (79, 1, Side::Left)])
                .zip(xs)
                .map(|((width, row, side), x)| Wanted {
                    x,
                    width,
                    row,
                    side,
                })
                .collect();
            let places = place(&wanted, 4, (86, 696));
            let boxes: Vec<(i32, i32, usize)> = (wanted.iter().zip(&places))
                .map(|(w, p)| {
                    let (from, to) = extent(w.x, w.width, p.side);
                    (from, to, p.row)
                })
                .collect();
            for (i, b) in boxes.iter().enumerate() {
                assert!(86 <= b.0 && b.1 <= 696, "{xs:?}: {b:?}");
                for a in &boxes[..i] {
                    assert!(!overlap(*a, *b), "{xs:?}: {boxes:?}");
                }
            }
        }
    }

    // The demo's chart (found by review): the 5th and 95th percentiles at 264 and 503 px, the
    // point estimate at 376 and the median 8 px right of it, at 384. No label may stand where a
    // line other than its own ends right under it or between it and its own line (each line
    // rises to its label's row), so none reads as another's.
    #[test]
    fn no_label_stands_beside_another_line_on_its_row() {
        let wanted = [
            (264, 60, 0, Side::Left),
            (503, 66, 0, Side::Right),
            (376, 132, 0, Side::Right),
            (384, 79, 1, Side::Right),
        ]
        .map(|(x, width, row, side)| Wanted {
            x,
            width,
            row,
            side,
        });
        let places = place(&wanted, 4, (86, 696));
        let all: Vec<(Wanted, Place)> =
            wanted.iter().copied().zip(places.iter().copied()).collect();
        for (w, p) in &all {
            assert!(!beside_another(*w, p, &all), "{w:?} at {p:?}: {places:?}");
        }
        // Before 0.17.0 the median's label stood left of its line, ending over the point
        // estimate's line 8 px away, on its row: the rule sees that placing.
        let before = [
            (all[0].0, all[0].1),
            (all[1].0, all[1].1),
            (
                all[2].0,
                Place {
                    row: 1,
                    side: Side::Right,
                },
            ),
        ];
        assert!(beside_another(
            wanted[3],
            &Place {
                row: 1,
                side: Side::Left
            },
            &before
        ));
    }

    // Room for every label where the chart wants it: nothing moves. (The point estimate stood
    // at 375 px before 0.17.0, its label then ending 3 px right of the 95th percentile's line,
    // at 509: a label beside another's line, which now moves; 340 leaves room.)
    #[test]
    fn labels_with_room_stay_where_the_chart_puts_them() {
        let wanted = [
            Wanted {
                x: 261,
                width: 60,
                row: 0,
                side: Side::Left,
            },
            Wanted {
                x: 509,
                width: 66,
                row: 0,
                side: Side::Right,
            },
            Wanted {
                x: 340,
                width: 132,
                row: 0,
                side: Side::Right,
            },
        ];
        let places = place(&wanted, 4, (86, 696));
        assert!(places
            .iter()
            .zip(&wanted)
            .all(|(p, w)| p.row == 0 && p.side == w.side));
    }
}
