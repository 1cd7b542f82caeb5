//! The printable field sheet of a bundle and the preview image of each event.
//!
//! [`render_field_sheet`] turns a [`SheetInput`] into one self-contained HTML page (CSS
//! embedded, images inline as `data:` URIs, no outside resource) that prints on A4 and US
//! Letter: safety cautions first, the trip header, the start point and route table, then one
//! card per event in visit order (code, coordinates in decimal degrees, UTM and MGRS, area,
//! dates, sources, preview, checklist tick boxes) and a smaller card per control point.
//! [`render_preview`] draws an event's preview PNG (footprint, alert pixels coloured by
//! source, centroid, north arrow, scale bar) with the `image` crate and no font file.
//!
//! Modules: [`preview`] (the drawing), [`palette`] (source colours), [`raster`] (canvas and
//! lines), [`font`] (5×7 glyphs), [`base64`] (data URIs), [`view`] (text shown on the sheet),
//! [`render`] (the template).

pub mod base64;
pub mod font;
pub mod palette;
pub mod preview;
pub mod raster;
pub mod render;
pub mod view;

#[cfg(test)]
mod tests;

pub use palette::{FillStyle, Pattern, SourcePalette};
pub use preview::{PreviewPixel, render_preview, render_preview_with_palette};
pub use render::{RouteLeg, SheetEvent, SheetInput, render_field_sheet};

/// Everything that can go wrong while making a sheet or a preview.
#[derive(Debug, thiserror::Error)]
pub enum SheetError {
    /// The input breaks a rule of the sheet (bounds, codes, distances).
    #[error("invalid sheet input: {0}")]
    InvalidInput(String),
    /// The PNG encoder failed.
    #[error("could not encode a preview image")]
    Encode(#[from] image::ImageError),
    /// The template failed to render.
    #[error("could not render the field sheet")]
    Template(#[from] askama::Error),
}
