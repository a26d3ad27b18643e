//! The rational quadratic B-spline that is exactly a circle: nine control points on the square
//! round it, weights 1 and √2/2 in turn, knots 0,0,0,¼,¼,½,½,¾,¾,1,1,1 (L. Piegl and W. Tiller,
//! *The NURBS Book*, 2nd ed., §7.5; from memory, and checked in `read::spline`'s tests by every
//! point lying on the circle).

/// The control points of the circle of radius `r` about (`cx`, `cy`).
pub fn control(cx: f64, cy: f64, r: f64) -> Vec<(f64, f64)> {
    [
        (1.0, 0.0),
        (1.0, 1.0),
        (0.0, 1.0),
        (-1.0, 1.0),
        (-1.0, 0.0),
        (-1.0, -1.0),
        (0.0, -1.0),
        (1.0, -1.0),
        (1.0, 0.0),
    ]
    .iter()
    .map(|&(x, y)| (cx + r * x, cy + r * y))
    .collect()
}

/// The weights: 1 at the square's side midpoints, √2/2 at its corners.
pub fn weights() -> Vec<f64> {
    (0..9)
        .map(|i| {
            if i % 2 == 0 {
                1.0
            } else {
                std::f64::consts::FRAC_1_SQRT_2
            }
        })
        .collect()
}

/// The knots.
pub const KNOTS: [f64; 12] = [
    0.0, 0.0, 0.0, 0.25, 0.25, 0.5, 0.5, 0.75, 0.75, 1.0, 1.0, 1.0,
];
