//! Stage 2, chain: joins the drawing's entities into closed contours and sorts them into the
//! part outline, its holes, and bays (construction geometry on the bay layer).

mod contour;

pub use contour::{Bay, Contour, Element, Hole, HoleShape, Part, bounds_of};
