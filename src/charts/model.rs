//! What a page hands over to be drawn: series, reference lines and how to label the axes.

/// How a series is drawn. Markers and dash patterns let series be told apart without colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SeriesStyle {
    /// A solid line.
    #[default]
    Line,
    /// A dashed line; each dashed series in a chart gets its own dash pattern.
    Dashed,
    /// Markers only, for scattered readings such as one value per run.
    Points,
    /// A solid line with markers along it.
    LineAndPoints,
}

impl SeriesStyle {
    pub(crate) fn draws_line(self) -> bool {
        matches!(self, Self::Line | Self::Dashed | Self::LineAndPoints)
    }

    pub(crate) fn draws_markers(self) -> bool {
        matches!(self, Self::Points | Self::LineAndPoints)
    }
}

/// Marker shapes, distinct in outline so that colour never carries meaning alone.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Marker {
    #[default]
    Circle,
    Square,
    Triangle,
    Diamond,
    Cross,
    Plus,
}

/// One named set of (x, y) points, e.g. the switch temperature over a run.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Series {
    pub label: String,
    /// Non-finite points are skipped when drawing and in the table.
    pub points: Vec<(f64, f64)>,
    pub style: SeriesStyle,
    pub marker: Marker,
    /// Index into [`crate::charts::PALETTE`] (wraps), so a part can keep its colour across charts.
    pub colour_index: usize,
}

/// A horizontal reference line, e.g. a part's limit "limit 85 °C".
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Threshold {
    pub label: String,
    pub y: f64,
}

/// A vertical reference line, e.g. the predicted time to a limit "limit in 4:10".
#[derive(Debug, Clone, PartialEq, Default)]
pub struct XMarker {
    pub label: String,
    pub x: f64,
}

/// How x values are turned into tick labels and table cells.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum AxisFormat {
    /// Numbers, with a k/M/G or m/µ/n prefix for very large or small magnitudes.
    #[default]
    Plain,
    /// Seconds shown as `m:ss` or `h:mm:ss` (150 → "2:30").
    MinutesSeconds,
    /// Unix seconds shown as the UTC month and day (`11-30`).
    Date,
    /// x is an index into these labels, e.g. run labels "r2 #5".
    Category(Vec<String>),
}

/// A line chart: what [`crate::charts::render_line_chart`] draws.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LineChart {
    pub title: String,
    /// With its unit, e.g. "time (s)".
    pub x_label: String,
    /// With its unit, e.g. "temperature (°C)".
    pub y_label: String,
    pub series: Vec<Series>,
    pub thresholds: Vec<Threshold>,
    pub x_markers: Vec<XMarker>,
    pub x_format: AxisFormat,
    /// Fixed lower end of the y axis; `None` fits the data and thresholds.
    pub y_min: Option<f64>,
    /// Fixed upper end of the y axis; `None` fits the data and thresholds.
    pub y_max: Option<f64>,
    /// Unique on the page: the SVG's element ids (title, desc, clip path) derive from it.
    pub id: String,
}

impl Series {
    /// The points that can be drawn: both coordinates finite.
    pub(crate) fn finite_points(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.points
            .iter()
            .copied()
            .filter(|(x, y)| x.is_finite() && y.is_finite())
    }
}

impl LineChart {
    /// Smallest and largest finite x and y over all series, or `None` when there is nothing to draw.
    pub(crate) fn data_extent(&self) -> Option<Extent> {
        let mut extent: Option<Extent> = None;
        for (x, y) in self.series.iter().flat_map(Series::finite_points) {
            let e = extent.get_or_insert(Extent {
                x: (x, x),
                y: (y, y),
            });
            e.x = (e.x.0.min(x), e.x.1.max(x));
            e.y = (e.y.0.min(y), e.y.1.max(y));
        }
        extent
    }
}

/// The range covered by finite data on each axis, as (low, high).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Extent {
    pub x: (f64, f64),
    pub y: (f64, f64),
}
