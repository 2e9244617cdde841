//! Reading back what a chart drew, from its SVG file, for the tests: the elements in
//! drawing order, the legend's frame, the geometry of the data drawn before it, and the
//! colour each legend entry shows. Independent of the drawing code: it reads only the
//! SVG text.

/// One SVG element: its tag, its attributes, and its text (for `<text>`).
#[derive(Debug, Clone)]
pub(crate) struct Element {
    pub(crate) tag: String,
    pub(crate) attrs: Vec<(String, String)>,
    pub(crate) text: String,
}

impl Element {
    pub(crate) fn attr(&self, name: &str) -> Option<&str> {
        self.attrs
            .iter()
            .find(|(k, _)| k == name)
            .map(|(_, v)| v.as_str())
    }

    fn num(&self, name: &str) -> f64 {
        self.attr(name)
            .and_then(|v| v.parse().ok())
            .unwrap_or(f64::NAN)
    }

    fn points(&self) -> Vec<(f64, f64)> {
        self.attr("points")
            .unwrap_or_default()
            .split_whitespace()
            .filter_map(|p| {
                let (x, y) = p.split_once(',')?;
                Some((x.parse().ok()?, y.parse().ok()?))
            })
            .collect()
    }
}

/// The elements of an SVG document, in order.
pub(crate) fn elements(svg: &str) -> Vec<Element> {
    let mut out = Vec::new();
    let mut rest = svg;
    while let Some(start) = rest.find('<') {
        rest = &rest[start + 1..];
        let Some(end) = rest.find('>') else { break };
        let inside = &rest[..end];
        rest = &rest[end + 1..];
        if inside.starts_with('/') || inside.starts_with('?') || inside.starts_with('!') {
            continue;
        }
        let (tag, mut attrs_text) = inside
            .split_once(char::is_whitespace)
            .unwrap_or((inside, ""));
        let mut attrs = Vec::new();
        while let Some(eq) = attrs_text.find("=\"") {
            let name = attrs_text[..eq].trim().to_string();
            let after = &attrs_text[eq + 2..];
            let Some(close) = after.find('"') else { break };
            attrs.push((name, after[..close].to_string()));
            attrs_text = &after[close + 1..];
        }
        let text = if tag == "text" {
            unescape(rest.split("</text>").next().unwrap_or("").trim())
        } else {
            String::new()
        };
        out.push(Element {
            tag: tag.trim_end_matches('/').to_string(),
            attrs,
            text,
        });
    }
    out
}

/// The text of XML character references.
fn unescape(text: &str) -> String {
    text.replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&apos;", "'")
        .replace("&#39;", "'")
        .replace("&amp;", "&")
}

/// The legend's frame `[x0, y0, x1, y1]` (the rectangle stroked in the frame colour) and
/// its index among the elements.
pub(crate) fn legend_frame(elements: &[Element]) -> Option<(usize, [f64; 4])> {
    elements.iter().enumerate().find_map(|(i, e)| {
        (e.tag == "rect" && e.attr("stroke") == Some("#969696")).then(|| {
            let (x, y) = (e.num("x"), e.num("y"));
            (i, [x, y, x + e.num("width"), y + e.num("height")])
        })
    })
}

/// Grid, axis and tick colours: not data.
const NOT_DATA: [&str; 3] = ["#F0F0F0", "#DADADA", "#3C3C3C"];

/// A data element drawn before the legend, as a shape.
#[derive(Debug, Clone)]
pub(crate) enum Shape {
    /// Centre and radius.
    Circle((f64, f64), f64),
    /// An open path.
    Path(Vec<(f64, f64)>),
    /// A filled polygon.
    Area(Vec<(f64, f64)>),
}

/// The data shapes drawn before element `before` (markers, lines, bands, curves; not the
/// grid, axes, texts or rectangles).
pub(crate) fn data_shapes(elements: &[Element], before: usize) -> Vec<Shape> {
    elements[..before]
        .iter()
        .filter(|e| !e.attr("stroke").is_some_and(|s| NOT_DATA.contains(&s)))
        .filter_map(|e| match e.tag.as_str() {
            "circle" => Some(Shape::Circle((e.num("cx"), e.num("cy")), e.num("r"))),
            "polyline" => Some(Shape::Path(e.points())),
            "polygon" => Some(Shape::Area(e.points())),
            "line" => Some(Shape::Path(vec![
                (e.num("x1"), e.num("y1")),
                (e.num("x2"), e.num("y2")),
            ])),
            _ => None,
        })
        .collect()
}

fn inside(p: (f64, f64), r: [f64; 4]) -> bool {
    p.0 >= r[0] && p.0 <= r[2] && p.1 >= r[1] && p.1 <= r[3]
}

fn segments_cross(a: (f64, f64), b: (f64, f64), c: (f64, f64), d: (f64, f64)) -> bool {
    let orient = |p: (f64, f64), q: (f64, f64), r: (f64, f64)| {
        (q.0 - p.0) * (r.1 - p.1) - (q.1 - p.1) * (r.0 - p.0)
    };
    let (d1, d2) = (orient(c, d, a), orient(c, d, b));
    let (d3, d4) = (orient(a, b, c), orient(a, b, d));
    if d1 == 0.0 && d2 == 0.0 {
        // Collinear: they meet only if their extents overlap on both axes.
        let meets = |p: f64, q: f64, r: f64, s: f64| p.min(q) <= r.max(s) && r.min(s) <= p.max(q);
        return meets(a.0, b.0, c.0, d.0) && meets(a.1, b.1, c.1, d.1);
    }
    d1 * d2 <= 0.0 && d3 * d4 <= 0.0
}

fn segment_hits(a: (f64, f64), b: (f64, f64), r: [f64; 4]) -> bool {
    if inside(a, r) || inside(b, r) {
        return true;
    }
    let corners = [(r[0], r[1]), (r[2], r[1]), (r[2], r[3]), (r[0], r[3])];
    (0..4).any(|k| segments_cross(a, b, corners[k], corners[(k + 1) % 4]))
}

fn point_in_polygon(p: (f64, f64), poly: &[(f64, f64)]) -> bool {
    let mut odd = false;
    for k in 0..poly.len() {
        let (a, b) = (poly[k], poly[(k + 1) % poly.len()]);
        if (a.1 > p.1) != (b.1 > p.1) && p.0 < a.0 + (p.1 - a.1) * (b.0 - a.0) / (b.1 - a.1) {
            odd = !odd;
        }
    }
    odd
}

/// Whether `shape` touches the rectangle `r`.
pub(crate) fn overlaps(shape: &Shape, r: [f64; 4]) -> bool {
    match shape {
        Shape::Circle(c, radius) => {
            let nx = c.0.clamp(r[0], r[2]);
            let ny = c.1.clamp(r[1], r[3]);
            (nx - c.0).powi(2) + (ny - c.1).powi(2) <= radius * radius
        }
        Shape::Path(points) => {
            points.iter().any(|p| inside(*p, r))
                || points.windows(2).any(|w| segment_hits(w[0], w[1], r))
        }
        Shape::Area(points) => {
            let closed: Vec<(f64, f64)> = points.iter().chain(points.first()).copied().collect();
            closed.windows(2).any(|w| segment_hits(w[0], w[1], r))
                || point_in_polygon((r[0], r[1]), points)
        }
    }
}

/// The colour of each series legend entry, by the first line of its label: the band
/// swatch (`rect` with opacity 0.17) drawn just before the label's text.
pub(crate) fn legend_colors(elements: &[Element]) -> Vec<(String, String)> {
    let Some((start, _)) = legend_frame(elements) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    let mut swatch: Option<String> = None;
    for e in &elements[start..] {
        if e.tag == "rect" && e.attr("opacity") == Some("0.17") {
            swatch = e.attr("fill").map(str::to_string);
        } else if e.tag == "text" {
            if let Some(color) = swatch.take() {
                out.push((e.text.clone(), color));
            }
        }
    }
    out
}
