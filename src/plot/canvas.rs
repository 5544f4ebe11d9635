//! The page's canvas as a plotters backend ([`Canvas`], wasm only): the
//! [`plotters_canvas::CanvasBackend`] for rectangles, circles and polygons,
//! with three things around it so the canvas shows what the SVG export
//! shows, quickly, on any screen:
//! - HiDPI: the canvas holds `devicePixelRatio` device pixels per CSS pixel
//!   and the context is scaled, so the drawing code works in CSS pixels (the
//!   SVG's units) and stays sharp;
//! - lines and paths are stroked where the SVG strokes them (integer
//!   coordinates, no half-pixel shift), and consecutive strokes of one
//!   colour and width go into one path (`moveTo`/`lineTo` on the context),
//!   stroked once (a dashed curve is hundreds of short strokes; one stroke
//!   instead of one per dash, and opaque colours give the same pixels).
//!   Calls per point measured faster than one `Path2D` from SVG path text:
//!   150 curves of 1,000 lines redrew in 30–46 ms against 45–62 ms, the
//!   text's parsing alone 16 ms a redraw (Chromium, software canvas);
//! - text is placed as the SVG backend places it (font size / 1.24, the
//!   baseline moved by 0.76 em, ±0.5 ex), not by the canvas's own baselines.
//!
//! Not here: what is drawn (`render.rs`, `draw.rs`).

use plotters_backend::text_anchor::{HPos, VPos};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
    FontTransform,
};
use plotters_canvas::CanvasBackend;
use wasm_bindgen::JsCast;
use web_sys::{CanvasRenderingContext2d, HtmlCanvasElement};

/// A drawing failure on the canvas, in words.
#[derive(Debug)]
pub struct CanvasFault(String);

impl std::fmt::Display for CanvasFault {
    fn fmt(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        write!(f, "canvas: {}", self.0)
    }
}

impl std::error::Error for CanvasFault {}

type Res = Result<(), DrawingErrorKind<CanvasFault>>;

fn fault<E: std::fmt::Display>(e: E) -> DrawingErrorKind<CanvasFault> {
    DrawingErrorKind::DrawingError(CanvasFault(e.to_string()))
}

fn css_colour(c: BackendColor) -> String {
    let (r, g, b) = c.rgb;
    format!("rgba({r},{g},{b},{})", c.alpha)
}

fn clamp_dpr(dpr: f64) -> f64 {
    if dpr.is_finite() {
        dpr.clamp(1.0, 4.0)
    } else {
        1.0
    }
}

/// The page's plot canvas, sized in CSS pixels.
pub struct Canvas {
    inner: CanvasBackend,
    ctx: CanvasRenderingContext2d,
    size: (u32, u32),
    /// Colour, alpha and width of the path being built, stroked on the next
    /// change of style or any other drawing.
    open: Option<((u8, u8, u8), u64, u32)>,
    /// Points in that path.
    points: usize,
    /// The x-height (ex) measured for each font size used.
    ex: Vec<(u64, f64)>,
}

impl Canvas {
    /// Size `canvas` to `width` × `height` CSS pixels at `dpr` device pixels
    /// per CSS pixel (clamped to 1..4) and clear it.
    pub fn new(
        canvas: HtmlCanvasElement,
        width: u32,
        height: u32,
        dpr: f64,
    ) -> Result<Canvas, String> {
        let dpr = clamp_dpr(dpr);
        canvas.set_width((width as f64 * dpr).round() as u32);
        canvas.set_height((height as f64 * dpr).round() as u32);
        let c = Canvas::on(canvas, width, height)?;
        c.ctx
            .set_transform(dpr, 0.0, 0.0, dpr, 0.0, 0.0)
            .map_err(|_| "the canvas refused its scale")?;
        Ok(c)
    }

    /// The canvas an earlier [`Canvas::new`] with the same size sized, as
    /// it is (a later pass of a drawing, `render::Pass`); refused when it
    /// has been resized since.
    pub fn resume(
        canvas: HtmlCanvasElement,
        width: u32,
        height: u32,
        dpr: f64,
    ) -> Result<Canvas, String> {
        let dpr = clamp_dpr(dpr);
        let want = (
            (width as f64 * dpr).round() as u32,
            (height as f64 * dpr).round() as u32,
        );
        if (canvas.width(), canvas.height()) != want {
            return Err(format!(
                "the canvas is {}×{} device px, not the {}×{} its drawing began on",
                canvas.width(),
                canvas.height(),
                want.0,
                want.1
            ));
        }
        Canvas::on(canvas, width, height)
    }

    fn on(canvas: HtmlCanvasElement, width: u32, height: u32) -> Result<Canvas, String> {
        let ctx: CanvasRenderingContext2d = canvas
            .get_context("2d")
            .ok()
            .flatten()
            .and_then(|c| c.dyn_into().ok())
            .ok_or("the canvas has no 2D context")?;
        let inner = CanvasBackend::with_canvas_object(canvas)
            .ok_or("the canvas backend could not start")?;
        Ok(Canvas {
            inner,
            ctx,
            size: (width, height),
            open: None,
            points: 0,
            ex: Vec::new(),
        })
    }

    fn flush(&mut self) {
        if self.open.take().is_some() && self.points > 0 {
            self.ctx.stroke();
        }
        self.points = 0;
    }

    fn stroke_path<S: BackendStyle>(
        &mut self,
        pts: impl IntoIterator<Item = BackendCoord>,
        style: &S,
    ) {
        let c = style.color();
        if c.alpha == 0.0 {
            return;
        }
        let key = (c.rgb, c.alpha.to_bits(), style.stroke_width());
        if self.open != Some(key) {
            self.flush();
            self.ctx.set_stroke_style_str(&css_colour(c));
            self.ctx.set_line_width(style.stroke_width() as f64);
            self.open = Some(key);
        }
        let mut it = pts.into_iter();
        if let Some((x, y)) = it.next() {
            if self.points == 0 {
                self.ctx.begin_path();
            }
            self.ctx.move_to(x as f64, y as f64);
            self.points += 1;
            for (x, y) in it {
                self.ctx.line_to(x as f64, y as f64);
                self.points += 1;
            }
        }
    }

    fn inner<E: std::error::Error + Send + Sync>(&self, r: Result<(), DrawingErrorKind<E>>) -> Res {
        r.map_err(fault)
    }

    fn x_height(&mut self, font_px: f64) -> f64 {
        let key = font_px.to_bits();
        if let Some((_, ex)) = self.ex.iter().find(|(k, _)| *k == key) {
            return *ex;
        }
        let ex = self
            .ctx
            .measure_text("x")
            .map(|m| m.actual_bounding_box_ascent())
            .ok()
            .filter(|v| v.is_finite() && *v > 0.0)
            .unwrap_or(font_px * 0.53);
        self.ex.push((key, ex));
        ex
    }
}

impl DrawingBackend for Canvas {
    type ErrorType = CanvasFault;

    fn get_size(&self) -> (u32, u32) {
        self.size
    }

    fn ensure_prepared(&mut self) -> Res {
        Ok(())
    }

    fn present(&mut self) -> Res {
        self.flush();
        Ok(())
    }

    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Res {
        self.flush();
        let r = self.inner.draw_pixel(point, color);
        self.inner(r)
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Res {
        self.stroke_path([from, to], style);
        Ok(())
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Res {
        self.flush();
        let r = self.inner.draw_rect(upper_left, bottom_right, style, fill);
        self.inner(r)
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Res {
        self.stroke_path(path, style);
        Ok(())
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Res {
        self.flush();
        let r = self.inner.draw_circle(center, radius, style, fill);
        self.inner(r)
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Res {
        self.flush();
        let r = self.inner.fill_polygon(vert, style);
        self.inner(r)
    }

    fn draw_text<S: BackendTextStyle>(&mut self, text: &str, style: &S, pos: BackendCoord) -> Res {
        self.flush();
        let colour = style.color();
        if colour.alpha == 0.0 {
            return Ok(());
        }
        // the SVG backend writes font-size = size / 1.24 and moves the
        // baseline by dy; do the same so both show the text in one place
        let font_px = style.size() / 1.24;
        let ctx = self.ctx.clone();
        ctx.set_font(&format!(
            "{} {}px {}",
            style.style().as_str(),
            font_px,
            style.family().as_str()
        ));
        let dy = match style.anchor().v_pos {
            VPos::Top => 0.76 * font_px,
            VPos::Center => 0.5 * self.x_height(font_px),
            VPos::Bottom => -0.5 * self.x_height(font_px),
        };
        ctx.set_text_baseline("alphabetic");
        ctx.set_text_align(match style.anchor().h_pos {
            HPos::Left => "start",
            HPos::Right => "end",
            HPos::Center => "center",
        });
        ctx.set_fill_style_str(&css_colour(colour));
        let turn = match style.transform() {
            FontTransform::None => 0.0,
            FontTransform::Rotate90 => 90.0,
            FontTransform::Rotate180 => 180.0,
            FontTransform::Rotate270 => 270.0,
        };
        let (x, y) = (pos.0 as f64, pos.1 as f64);
        if turn != 0.0 {
            ctx.save();
            ctx.translate(x, y)
                .map_err(|_| fault("translate refused"))?;
            ctx.rotate(turn * std::f64::consts::PI / 180.0)
                .map_err(|_| fault("rotate refused"))?;
            let r = ctx.fill_text(text, 0.0, dy);
            ctx.restore();
            r.map_err(|_| fault("text refused"))
        } else {
            ctx.fill_text(text, x, y + dy)
                .map_err(|_| fault("text refused"))
        }
    }
}
