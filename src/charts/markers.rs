//! Marker shapes drawn at data points and in the legend.

use super::model::Marker;
use super::svg::num;

/// A point in viewBox units, and a straight stroke between two of them.
type Point = (f64, f64);
type Segment = (Point, Point);

/// Half the width of a marker, in viewBox units: big enough to tell shapes apart on a phone.
const MARKER_RADIUS: f64 = 4.5;

/// One marker centred on (x, y). Closed shapes are filled; the cross and plus are stroked.
pub(crate) fn marker_element(marker: Marker, x: f64, y: f64, colour: &str, class: &str) -> String {
    let r = MARKER_RADIUS;
    match marker {
        Marker::Circle => format!(
            r#"<circle class="{class}" cx="{}" cy="{}" r="{}" fill="{colour}"/>"#,
            num(x),
            num(y),
            num(r)
        ),
        Marker::Square => {
            let side = r * 1.7;
            format!(
                r#"<rect class="{class}" x="{}" y="{}" width="{}" height="{}" fill="{colour}"/>"#,
                num(x - side / 2.0),
                num(y - side / 2.0),
                num(side),
                num(side)
            )
        }
        Marker::Triangle => filled_path(
            class,
            colour,
            &[
                (x, y - r * 1.2),
                (x + r * 1.1, y + r * 0.8),
                (x - r * 1.1, y + r * 0.8),
            ],
        ),
        Marker::Diamond => filled_path(
            class,
            colour,
            &[(x, y - r * 1.3), (x + r, y), (x, y + r * 1.3), (x - r, y)],
        ),
        Marker::Cross => stroked_path(
            class,
            colour,
            &[
                ((x - r, y - r), (x + r, y + r)),
                ((x - r, y + r), (x + r, y - r)),
            ],
        ),
        Marker::Plus => stroked_path(
            class,
            colour,
            &[
                ((x - r * 1.2, y), (x + r * 1.2, y)),
                ((x, y - r * 1.2), (x, y + r * 1.2)),
            ],
        ),
    }
}

fn filled_path(class: &str, colour: &str, corners: &[Point]) -> String {
    let data: Vec<String> = corners
        .iter()
        .enumerate()
        .map(|(i, (cx, cy))| {
            format!(
                "{}{},{}",
                if i == 0 { 'M' } else { 'L' },
                num(*cx),
                num(*cy)
            )
        })
        .collect();
    format!(
        r#"<path class="{class}" d="{}Z" fill="{colour}"/>"#,
        data.join(" ")
    )
}

fn stroked_path(class: &str, colour: &str, strokes: &[Segment]) -> String {
    let data: Vec<String> = strokes
        .iter()
        .map(|((x0, y0), (x1, y1))| {
            format!("M{},{} L{},{}", num(*x0), num(*y0), num(*x1), num(*y1))
        })
        .collect();
    format!(
        r#"<path class="{class}" d="{}" fill="none" stroke="{colour}" stroke-width="2"/>"#,
        data.join(" ")
    )
}
