//! Series colours and dash patterns.

/// Six colours from the Okabe–Ito palette, which stays distinguishable for the common forms of
/// colour blindness (hex values recalled from memory). Its yellow is left out as too faint on
/// white, and black is kept for text, axes and reference lines. Ordered from most to least
/// contrast against white, so the first series are the easiest to see.
pub const PALETTE: [&str; 6] = [
    "#0072B2", // blue
    "#D55E00", // vermillion
    "#009E73", // bluish green
    "#CC79A7", // reddish purple
    "#E69F00", // orange
    "#56B4E9", // sky blue
];

/// Dash patterns for dashed series, in viewBox units, each unlike the others in a greyscale print.
const DASH_PATTERNS: [&str; 6] = ["8 4", "2 3", "10 3 2 3", "4 2", "1 4", "12 4 4 4"];

pub(crate) fn colour(colour_index: usize) -> &'static str {
    PALETTE[colour_index % PALETTE.len()]
}

/// By position in the chart rather than by colour, so two dashed series in one chart never share
/// a pattern even if the caller gave them the same colour.
pub(crate) fn dash_pattern(position: usize) -> &'static str {
    DASH_PATTERNS[position % DASH_PATTERNS.len()]
}

/// Light enough to sit behind the data, dark enough to survive a laser printer.
pub(crate) const GRID_COLOUR: &str = "#D0D0D0";
pub(crate) const INK: &str = "#000000";
/// Drawn behind text that sits over lines so it stays readable.
pub(crate) const HALO_ATTRIBUTES: &str =
    r##"stroke="#FFFFFF" stroke-width="4" stroke-linejoin="round" paint-order="stroke""##;
