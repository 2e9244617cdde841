//! Convex polygons in the plane: the exact (up to rounding) region a 2-D method knows.
//!
//! A polygon is its vertex list in counter-clockwise order. Clipping by one halfplane is
//! the single-edge step of the Sutherland-Hodgman algorithm (Sutherland & Hodgman,
//! "Reentrant polygon clipping", Comm. ACM 17(1), 1974), which keeps a convex polygon
//! convex and counter-clockwise. Area is the shoelace formula A = (1/2) sum_i
//! (x_i y_{i+1} - x_{i+1} y_i); the centroid is C = (1/(6A)) sum_i (p_i + p_{i+1})
//! (x_i y_{i+1} - x_{i+1} y_i) (both common practice, from memory). Both are evaluated
//! relative to the first vertex, which keeps the cross products small for a small polygon
//! far from the origin.

/// A convex polygon given by its vertices in counter-clockwise order; fewer than three
/// vertices means the polygon is empty (or degenerate).
#[derive(Clone, Debug)]
pub struct Polygon {
    vertices: Vec<[f64; 2]>,
    scratch: Vec<[f64; 2]>,
}

impl PartialEq for Polygon {
    /// Polygons are equal when their vertex lists are (scratch space ignored).
    fn eq(&self, other: &Polygon) -> bool {
        self.vertices == other.vertices
    }
}

impl Polygon {
    /// The box [l_0, u_0] x [l_1, u_1], counter-clockwise from the lower-left corner.
    pub fn from_box(lower: [f64; 2], upper: [f64; 2]) -> Polygon {
        Polygon::from_vertices(vec![
            [lower[0], lower[1]],
            [upper[0], lower[1]],
            [upper[0], upper[1]],
            [lower[0], upper[1]],
        ])
    }

    /// A polygon from vertices the caller promises are convex and counter-clockwise.
    pub fn from_vertices(vertices: Vec<[f64; 2]>) -> Polygon {
        Polygon {
            vertices,
            scratch: Vec::new(),
        }
    }

    /// The vertices, counter-clockwise.
    pub fn vertices(&self) -> &[[f64; 2]] {
        &self.vertices
    }

    /// True when fewer than three vertices are left.
    pub fn is_empty(&self) -> bool {
        self.vertices.len() < 3
    }

    /// Keeps the part where `normal . y <= offset` (one Sutherland-Hodgman pass): each
    /// vertex on the kept side stays, and each edge that crosses the line contributes
    /// its crossing point `p + t (q - p)`, `t = f(p) / (f(p) - f(q))`, `f = normal . y -
    /// offset`.
    pub fn clip(&mut self, normal: [f64; 2], offset: f64) {
        let n = self.vertices.len();
        self.scratch.clear();
        let side = |p: &[f64; 2]| normal[0] * p[0] + normal[1] * p[1] - offset;
        for i in 0..n {
            let p = self.vertices[i];
            let q = self.vertices[(i + 1) % n];
            let (fp, fq) = (side(&p), side(&q));
            if fp <= 0.0 {
                self.scratch.push(p);
            }
            if (fp < 0.0 && fq > 0.0) || (fp > 0.0 && fq < 0.0) {
                let t = fp / (fp - fq);
                self.scratch
                    .push([p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])]);
            }
        }
        std::mem::swap(&mut self.vertices, &mut self.scratch);
        if self.vertices.len() < 3 {
            self.vertices.clear();
        }
    }

    /// The signed area (positive for counter-clockwise) by the shoelace formula.
    pub fn area(&self) -> f64 {
        self.moments().0
    }

    /// The centre of gravity of the polygon (uniform density), or `None` when its area
    /// is not positive.
    pub fn centroid(&self) -> Option<[f64; 2]> {
        let (area, cx, cy) = self.moments();
        if area.is_nan() || area <= 0.0 {
            return None;
        }
        let o = self.vertices[0];
        let c = [o[0] + cx / (6.0 * area), o[1] + cy / (6.0 * area)];
        (c[0].is_finite() && c[1].is_finite()).then_some(c)
    }

    /// (area, sum (x_i + x_{i+1}) cross_i, sum (y_i + y_{i+1}) cross_i), with
    /// coordinates relative to the first vertex.
    fn moments(&self) -> (f64, f64, f64) {
        let n = self.vertices.len();
        if n < 3 {
            return (0.0, 0.0, 0.0);
        }
        let o = self.vertices[0];
        let rel = |i: usize| {
            let v = self.vertices[i % n];
            [v[0] - o[0], v[1] - o[1]]
        };
        let (mut twice_area, mut mx, mut my) = (0.0, 0.0, 0.0);
        for i in 1..n - 1 {
            let (p, q) = (rel(i), rel(i + 1));
            let cross = p[0] * q[1] - q[0] * p[1];
            twice_area += cross;
            mx += (p[0] + q[0]) * cross;
            my += (p[1] + q[1]) * cross;
        }
        (0.5 * twice_area, mx, my)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn box_area_and_centroid() {
        let p = Polygon::from_box([-1.0, 2.0], [3.0, 2.5]);
        assert_eq!(p.area(), 2.0);
        assert_eq!(p.centroid(), Some([1.0, 2.25]));
    }

    #[test]
    fn triangle_centroid_is_the_vertex_mean() {
        // The centroid of a triangle is the mean of its vertices (elementary geometry).
        let v = [[0.3, -1.0], [2.0, 0.5], [-0.7, 1.9]];
        let t = Polygon::from_vertices(v.to_vec());
        let c = t.centroid().unwrap();
        let mean = [
            (v[0][0] + v[1][0] + v[2][0]) / 3.0,
            (v[0][1] + v[1][1] + v[2][1]) / 3.0,
        ];
        assert!((c[0] - mean[0]).abs() < 1e-15 && (c[1] - mean[1]).abs() < 1e-15);
        // Area by the determinant formula |(b - a) x (c - a)| / 2.
        let det =
            (v[1][0] - v[0][0]) * (v[2][1] - v[0][1]) - (v[2][0] - v[0][0]) * (v[1][1] - v[0][1]);
        assert!((t.area() - 0.5 * det).abs() < 1e-15);
    }

    #[test]
    fn clipping_a_box_by_its_diagonal_halves_it() {
        let mut p = Polygon::from_box([0.0, 0.0], [1.0, 1.0]);
        p.clip([1.0, 1.0], 1.0);
        assert_eq!(p.vertices().len(), 3);
        assert!((p.area() - 0.5).abs() < 1e-15);
        let c = p.centroid().unwrap();
        assert!((c[0] - 1.0 / 3.0).abs() < 1e-15 && (c[1] - 1.0 / 3.0).abs() < 1e-15);
        // A halfplane that misses the polygon empties it; one that contains it keeps it.
        let mut q = p.clone();
        q.clip([1.0, 0.0], 5.0);
        assert_eq!(q, p);
        q.clip([1.0, 0.0], -0.5);
        assert!(q.is_empty());
        assert_eq!(q.area(), 0.0);
        assert_eq!(q.centroid(), None);
    }

    /// A random convex polygon: the box [-1, 1]^2 clipped by halfplanes through random
    /// points near the origin, so the origin stays inside.
    fn random_polygon(cuts: &[(f64, f64)]) -> Polygon {
        let mut p = Polygon::from_box([-1.0, -1.0], [1.0, 1.0]);
        for &(angle, depth) in cuts {
            let n = [angle.cos(), angle.sin()];
            p.clip(n, depth);
        }
        p
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 512, ..ProptestConfig::default() })]

        /// Grunbaum 1960 ("Partitions of mass-distributions and of convex bodies by
        /// hyperplanes", Pacific J. Math. 10): every line through the centroid of a
        /// planar convex body leaves at least (2/3)^2 = 4/9 of its area on each side.
        #[test]
        fn lines_through_the_centroid_keep_four_ninths(
            cuts in prop::collection::vec((0.0..std::f64::consts::TAU, 0.01..1.0f64), 0..9),
            directions in prop::collection::vec(0.0..std::f64::consts::TAU, 1..8),
        ) {
            let p = random_polygon(&cuts);
            let area = p.area();
            prop_assert!(area > 0.0);
            let c = p.centroid().unwrap();
            for theta in directions {
                let n = [theta.cos(), theta.sin()];
                let b = n[0] * c[0] + n[1] * c[1];
                let mut below = p.clone();
                below.clip(n, b);
                let mut above = p.clone();
                above.clip([-n[0], -n[1]], -b);
                let (lo, hi) = (below.area(), above.area());
                prop_assert!((lo + hi - area).abs() <= 1e-12 * area);
                let floor = 4.0 / 9.0 * area * (1.0 - 1e-9);
                prop_assert!(lo >= floor && hi >= floor, "{lo} {hi} of {area}");
            }
        }
    }

    #[test]
    fn the_four_ninths_constant_is_attained_by_a_triangle() {
        // The extreme case of Grunbaum's bound (Grunbaum 1960): the line through the
        // centroid of a triangle parallel to a side cuts off, on the opposite vertex's
        // side, a similar triangle with ratio 2/3, hence exactly (2/3)^2 = 4/9 of the area.
        let t = Polygon::from_vertices(vec![[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]]);
        let c = t.centroid().unwrap();
        let mut apex = t.clone();
        apex.clip([0.0, -1.0], -c[1]);
        assert!((apex.area() / t.area() - 4.0 / 9.0).abs() < 1e-14);
    }
}
