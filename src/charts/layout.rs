//! Where things go in the 480 × 360 viewBox.
//!
//! Text is 16.5 units (18 for the title): scaled onto a 390 px phone (about 358 px of content)
//! that is 12.3 CSS px, the least a phone reads comfortably; the stylesheet caps the chart's
//! width so it does not grow past that on a desktop.

pub(crate) const VIEW_WIDTH: f64 = 480.0;
pub(crate) const VIEW_HEIGHT: f64 = 360.0;
pub(crate) const FONT_SIZE: f64 = 16.5;
pub(crate) const TITLE_FONT_SIZE: f64 = 18.0;
/// Rough advance of one character of a sans-serif face at [`FONT_SIZE`] (about 0.6 em). Text is
/// never measured on the server, so widths are estimated and labels kept short.
pub(crate) const CHAR_WIDTH: f64 = 9.9;

pub(crate) const TITLE_BASELINE: f64 = 22.0;
/// Centre line of the first legend row, and the height of each row.
pub(crate) const LEGEND_FIRST_ROW: f64 = 44.0;
pub(crate) const LEGEND_ROW_HEIGHT: f64 = 24.0;

/// Baseline of the x tick labels below the plot, and of the x axis title below those.
pub(crate) const X_TICK_LABEL_OFFSET: f64 = 22.0;
pub(crate) const X_TITLE_OFFSET: f64 = 44.0;
/// Baseline of the rotated y axis title, measured from the left edge.
pub(crate) const Y_TITLE_BASELINE: f64 = 20.0;
/// Gap between a y tick label's right end and the plot.
pub(crate) const Y_TICK_LABEL_GAP: f64 = 9.0;

/// Direct labels at line ends are drawn only when every one fits in this many characters and
/// none has to be pushed from its line's end; otherwise the legend alone names the series.
pub(crate) const DIRECT_LABEL_CHARS: usize = 14;
/// Direct labels closer than this are pushed apart.
pub(crate) const DIRECT_LABEL_SPACING: f64 = 20.0;

/// The rectangle inside the axes where data is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct PlotArea {
    pub left: f64,
    pub top: f64,
    pub right: f64,
    pub bottom: f64,
}

impl PlotArea {
    /// Sized around what sits outside it: the legend rows above, the widest y tick label on the
    /// left, direct labels on the right, and tick labels plus the x title below.
    pub fn around(
        legend_rows: usize,
        widest_y_tick_chars: usize,
        widest_direct_label_chars: usize,
    ) -> Self {
        let top = LEGEND_FIRST_ROW + legend_rows.max(1) as f64 * LEGEND_ROW_HEIGHT - 4.0;
        let left =
            (Y_TITLE_BASELINE + 8.0 + widest_y_tick_chars as f64 * CHAR_WIDTH + Y_TICK_LABEL_GAP)
                .max(56.0);
        let gutter = if widest_direct_label_chars == 0 {
            24.0
        } else {
            (widest_direct_label_chars as f64 * CHAR_WIDTH + 20.0).max(24.0)
        };
        let bottom = VIEW_HEIGHT - 8.0 - X_TITLE_OFFSET;
        Self {
            left,
            top,
            right: VIEW_WIDTH - gutter,
            bottom,
        }
    }

    pub fn width(&self) -> f64 {
        self.right - self.left
    }

    pub fn height(&self) -> f64 {
        self.bottom - self.top
    }
}
