//! The print sheet: the annotated map of a layer on one landscape page (A3, 420 × 297 mm),
//! centred inside 10 mm margins at the largest scale that fits, as a lossless DEFLATE image
//! (PDF 1.7, ISO 32000-1: image XObject, section 8.9; FlateDecode, 7.4.4) drawn at
//! [`PRINT_PPI`] or more. Written with the `pdf-writer` crate; compressed with `flate2` on
//! its zlib-rs backend.

use pdf_writer::{Content, Filter, Finish, Name, Pdf, Rect, Ref, TextStr};

/// A3 landscape in PostScript points (1 pt = 1/72 in; 420 × 297 mm).
pub const A3_LANDSCAPE_PT: (f32, f32) = (1190.55, 841.89);
/// Margin, points (10 mm).
const MARGIN_PT: f32 = 28.35;
/// The least resolution of the printed sheet, pixels per inch: text of 12 px on screen
/// stays sharp on paper at 200 ppi and more (common practice for printed maps: 150 to 300).
pub const PRINT_PPI: f64 = 200.0;

/// The factor by which a sheet of `w` × `h` screen pixels is drawn larger so that, fitted to
/// the page, it prints at [`PRINT_PPI`] or more (at least 1).
pub fn print_scale(w: u32, h: u32) -> f64 {
    let (pw, ph) = A3_LANDSCAPE_PT;
    let pt_per_px = ((pw - 2.0 * MARGIN_PT) / w as f32).min((ph - 2.0 * MARGIN_PT) / h as f32) as f64;
    // ppi at this size is 72 / pt_per_px; draw k times larger to reach PRINT_PPI.
    (PRINT_PPI * pt_per_px / 72.0).max(1.0)
}

/// One page holding a `w` × `h` RGB picture, titled `title`.
pub fn sheet_pdf(w: u32, h: u32, rgb: &[u8], title: &str) -> Vec<u8> {
    let (pw, ph) = A3_LANDSCAPE_PT;
    let (catalog, tree, page, image, content, info) =
        (Ref::new(1), Ref::new(2), Ref::new(3), Ref::new(4), Ref::new(5), Ref::new(6));
    let mut pdf = Pdf::new();
    pdf.catalog(catalog).pages(tree);
    pdf.pages(tree).kids([page]).count(1);
    let mut p = pdf.page(page);
    p.media_box(Rect::new(0.0, 0.0, pw, ph));
    p.parent(tree);
    p.contents(content);
    p.resources().x_objects().pair(Name(b"Sheet"), image);
    p.finish();
    let packed = {
        use std::io::Write;
        let mut z = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::new(6));
        z.write_all(rgb).and_then(|_| z.finish()).expect("compressing into memory cannot fail")
    };
    let mut img = pdf.image_xobject(image, &packed);
    img.filter(Filter::FlateDecode);
    img.width(w as i32);
    img.height(h as i32);
    img.color_space().device_rgb();
    img.bits_per_component(8);
    img.finish();
    let scale = ((pw - 2.0 * MARGIN_PT) / w as f32).min((ph - 2.0 * MARGIN_PT) / h as f32);
    let (iw, ih) = (w as f32 * scale, h as f32 * scale);
    let mut c = Content::new();
    c.save_state();
    c.transform([iw, 0.0, 0.0, ih, (pw - iw) / 2.0, (ph - ih) / 2.0]);
    c.x_object(Name(b"Sheet"));
    c.restore_state();
    pdf.stream(content, &c.finish());
    pdf.document_info(info).title(TextStr(title)).creator(TextStr(concat!("lobemap ", env!("CARGO_PKG_VERSION"))));
    pdf.finish()
}
