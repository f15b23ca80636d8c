//! A picture as shapes in page pixels, grouped by what they show: the one input of both
//! renderers (`svg.rs`, `png.rs`).
//!
//! A [`Group`] is one drawn thing (a qubit, a check, a gate step, a fault, a legend entry). Its
//! id, class, title and data attributes carry the meaning into the SVG, where hover shows the
//! title and tests find elements by class; the PNG renderer draws the shapes only.

/// An sRGB colour.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Rgb(pub u8, pub u8, pub u8);

impl Rgb {
    /// `#rrggbb`.
    pub fn hex(self) -> String {
        format!("#{:02x}{:02x}{:02x}", self.0, self.1, self.2)
    }
}

/// How a shape is filled and stroked.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Paint {
    /// Fill colour and opacity.
    pub fill: Option<(Rgb, f64)>,
    /// Outline colour.
    pub stroke: Option<Rgb>,
    /// Outline width in pixels.
    pub width: f64,
    /// Dash and gap lengths of the outline, if dashed.
    pub dash: Option<(f64, f64)>,
}

impl Paint {
    /// A filled shape without outline.
    pub fn fill(c: Rgb) -> Paint {
        Paint {
            fill: Some((c, 1.0)),
            stroke: None,
            width: 0.0,
            dash: None,
        }
    }

    /// An outline without fill.
    pub fn stroke(c: Rgb, width: f64) -> Paint {
        Paint {
            fill: None,
            stroke: Some(c),
            width,
            dash: None,
        }
    }

    /// A filled shape with an outline.
    pub fn both(fill: Rgb, stroke: Rgb, width: f64) -> Paint {
        Paint {
            fill: Some((fill, 1.0)),
            stroke: Some(stroke),
            width,
            dash: None,
        }
    }

    /// The same with a dashed outline.
    pub fn dashed(self, dash: f64, gap: f64) -> Paint {
        Paint {
            dash: Some((dash, gap)),
            ..self
        }
    }

    /// The same with the fill at this opacity.
    pub fn opacity(self, a: f64) -> Paint {
        Paint {
            fill: self.fill.map(|(c, _)| (c, a)),
            ..self
        }
    }
}

/// Horizontal anchor of a text; texts are centred vertically on their point.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Anchor {
    /// The point is the left end.
    Start,
    /// The point is the middle.
    Middle,
    /// The point is the right end.
    End,
}

/// A point in page pixels, `y` downwards.
pub type Px = (f64, f64);

/// One primitive.
#[derive(Clone, Debug, PartialEq)]
pub enum Shape {
    /// A circle.
    Circle {
        /// Centre.
        c: Px,
        /// Radius.
        r: f64,
        /// Paint.
        paint: Paint,
    },
    /// A closed polygon.
    Polygon {
        /// Corners.
        pts: Vec<Px>,
        /// Paint.
        paint: Paint,
    },
    /// An open polyline (stroke only).
    Path {
        /// Points.
        pts: Vec<Px>,
        /// Paint (its fill is ignored).
        paint: Paint,
    },
    /// A line of text.
    Text {
        /// Anchor point.
        at: Px,
        /// The text.
        text: String,
        /// Font size in pixels.
        size: f64,
        /// Horizontal anchor.
        anchor: Anchor,
        /// Colour.
        colour: Rgb,
        /// Bold face.
        bold: bool,
    },
}

/// Shapes that show one thing.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Group {
    /// Unique id, e.g. `qubit-3`.
    pub id: Option<String>,
    /// Space-separated classes, e.g. `qubit data`.
    pub class: String,
    /// Hover text.
    pub title: Option<String>,
    /// `data-*` attributes (name without the prefix, value).
    pub data: Vec<(String, String)>,
    /// The shapes, painted in order.
    pub shapes: Vec<Shape>,
}

impl Group {
    /// An empty group with these classes.
    pub fn new(class: impl Into<String>) -> Group {
        Group {
            class: class.into(),
            ..Group::default()
        }
    }

    /// Sets the id.
    pub fn id(mut self, id: impl Into<String>) -> Group {
        self.id = Some(id.into());
        self
    }

    /// Sets the hover text.
    pub fn title(mut self, t: impl Into<String>) -> Group {
        self.title = Some(t.into());
        self
    }

    /// Adds a `data-*` attribute.
    pub fn data(mut self, k: &str, v: impl Into<String>) -> Group {
        self.data.push((k.to_string(), v.into()));
        self
    }

    /// Adds a shape.
    pub fn push(&mut self, s: Shape) {
        self.shapes.push(s);
    }
}

/// The whole picture.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Scene {
    /// Width in pixels.
    pub width: f64,
    /// Height in pixels.
    pub height: f64,
    /// Groups, painted in order.
    pub groups: Vec<Group>,
}

/// Registers the bundled DejaVu Sans, regular and bold, as plotters' `sans-serif` (once), so
/// that text is measured, and drawn in PNG output, the same on every machine.
pub(crate) fn ensure_fonts() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        use plotters::style::{register_font, FontStyle};
        let _ = register_font("sans-serif", FontStyle::Normal, dejavu::sans::regular());
        let _ = register_font("sans-serif", FontStyle::Bold, dejavu::sans::bold());
    });
}

/// Width in pixels of `text` in the bundled sans-serif face.
pub fn text_width(text: &str, size: f64, bold: bool) -> f64 {
    use plotters::style::{FontDesc, FontFamily, FontStyle};
    ensure_fonts();
    let style = if bold {
        FontStyle::Bold
    } else {
        FontStyle::Normal
    };
    // `FontDesc::style` keeps the face already loaded, so the style goes to `new`.
    FontDesc::new(FontFamily::SansSerif, size, style)
        .box_size(text)
        .map_or(0.6 * size * text.chars().count() as f64, |(w, _)| w as f64)
}
