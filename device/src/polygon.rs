//! A polygon pad's outline (vertices `[x, y]` in m, disc axis at the origin): the radial band
//! it rubs on. Whether the outline is valid (enough vertices, an area, not enclosing the axis,
//! not self-intersecting) is the core's `PolygonPad` to decide; this only measures it.

/// The closed outline's edges (a, b), the last one back to the first vertex.
pub fn edges(vs: &[[f64; 2]]) -> impl Iterator<Item = ([f64; 2], [f64; 2])> + '_ {
    vs.iter().copied().zip(vs.iter().copied().cycle().skip(1))
}

/// Smallest distance from the disc axis (origin) to the outline, m (∞ for no vertices).
pub fn min_radius(vs: &[[f64; 2]]) -> f64 {
    edges(vs)
        .map(|(a, b)| {
            let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
            let len2 = dx * dx + dy * dy;
            // The foot of the perpendicular from the origin, kept on the edge.
            let t = if len2 > 0.0 {
                (-(a[0] * dx + a[1] * dy) / len2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            libm::hypot(a[0] + t * dx, a[1] + t * dy)
        })
        .fold(f64::INFINITY, f64::min)
}

/// Largest distance from the disc axis (origin) to the outline, m: at a vertex.
pub fn max_radius(vs: &[[f64; 2]]) -> f64 {
    vs.iter()
        .map(|p| libm::hypot(p[0], p[1]))
        .fold(0.0, f64::max)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn radial_band_of_a_square_pad() {
        // [calc] square x 1.0 … 1.2, y −0.1 … 0.1: nearest point (1.0, 0) on the inner edge,
        // farthest the corners √(1.2² + 0.1²).
        let sq = [[1.0, -0.1], [1.2, -0.1], [1.2, 0.1], [1.0, 0.1]];
        assert!((min_radius(&sq) - 1.0).abs() < 1e-15);
        assert!((max_radius(&sq) - (1.44f64 + 0.01).sqrt()).abs() < 1e-15);
        // [calc] a triangle whose nearest point is a vertex, not an edge's interior.
        let tri = [[3.0, 4.0], [6.0, 4.0], [6.0, 8.0]];
        assert!((min_radius(&tri) - 5.0).abs() < 1e-15);
        assert_eq!(edges(&tri).count(), 3);
    }
}
