//! Structure diagrams: 2D coordinates computed by the tool ([`layout`]),
//! so that drawings, molfiles and reports need no outside program. The
//! drawing itself (SVG) lives with the reports (`report::drawing`).

pub mod geom;
pub mod layout;
pub mod planar;

pub use layout::{layout, quality, Point, Quality};
