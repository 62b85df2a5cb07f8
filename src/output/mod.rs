//! Output: the profile as text, HTML with SVG charts, and the per-node table, all from the
//! report document. Produces strings and files; never computes a figure. Uses `profile`.

pub mod html;
pub mod json;
pub mod number;
pub mod pernode;
pub(crate) mod svg;
pub mod text;
