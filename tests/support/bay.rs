//! A bay (the quadrilateral, or three- or five-sided, space an ellipse is solved in) from its
//! corners, named "bay 1" on the layer "test", for the solver tests.

use conicut::chain::Bay;
use conicut::geom::Point;

/// The bay with these corners (mm), in order.
pub fn bay(corners: &[(f64, f64)]) -> Bay {
    Bay::new(
        "bay 1",
        "test",
        &corners
            .iter()
            .map(|&(x, y)| Point::new(x, y))
            .collect::<Vec<_>>(),
        &[],
    )
    .unwrap()
}
