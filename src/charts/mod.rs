//! Server-side SVG line charts for run and trend pages.
//!
//! The output is one self-contained `<svg>` element: no scripts, no fonts, no `style` attribute
//! or element, so it renders under `default-src 'self'; style-src 'self'`. Everything visual is a
//! presentation attribute (`stroke`, `fill`, `stroke-dasharray`, `font-size`) that a stylesheet
//! may still override through the `class` names.
//!
//! Colour never carries meaning alone: each series also has its own marker shape or dash pattern,
//! a direct label at the end of its line and a legend entry, so a greyscale print still reads.
//! [`chart_table_rows`] gives the numbers behind a chart for a table beside it.
//!
//! ```
//! use eddybench::charts::{AxisFormat, LineChart, Series, Threshold, render_line_chart};
//!
//! let chart = LineChart {
//!     title: String::from("Switch temperature"),
//!     x_label: String::from("time (s)"),
//!     y_label: String::from("temperature (°C)"),
//!     series: vec![Series {
//!         label: String::from("switch Q1"),
//!         points: vec![(0.0, 24.0), (60.0, 41.0), (120.0, 52.5)],
//!         ..Series::default()
//!     }],
//!     thresholds: vec![Threshold { label: String::from("limit 85 °C"), y: 85.0 }],
//!     x_format: AxisFormat::MinutesSeconds,
//!     id: String::from("run-12-switch"),
//!     ..LineChart::default()
//! };
//! let svg = render_line_chart(&chart);
//! assert!(svg.starts_with("<svg") && svg.contains(r#"data-series="switch Q1""#));
//! ```

mod accessible;
mod axis;
mod decimate;
mod format;
mod layout;
mod legend;
mod line_chart;
mod markers;
mod model;
mod palette;
mod reference_lines;
mod scale;
mod series;
mod svg;

pub use accessible::chart_table_rows;
pub use decimate::{MAX_POINTS_PER_SERIES, decimate_min_max};
pub use format::{format_date, format_minutes_seconds, format_value};
pub use line_chart::render_line_chart;
pub use model::{AxisFormat, LineChart, Marker, Series, SeriesStyle, Threshold, XMarker};
pub use palette::PALETTE;
pub use scale::{Ticks, nice_ticks};
pub use svg::escape_xml;
