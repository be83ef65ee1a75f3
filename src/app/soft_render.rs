//! A small software rasteriser for tests: it draws egui's tessellated output into an image on
//! the CPU, so a test can fulfil the dashboard's screenshot requests (chart export) with no GPU
//! and no display. It fills triangles with interpolated vertex colours times the texture
//! (nearest texel), blended with premultiplied alpha, clipped to each mesh's clip rectangle.

use egui::epaint::{ClippedPrimitive, Primitive};
use egui::{Color32, ColorImage, TextureId, TexturesDelta};
use std::collections::HashMap;
use std::sync::{Arc, Mutex};

/// The textures egui uploaded so far (the font atlas, images), shared with the harness.
pub type Textures = Arc<Mutex<HashMap<TextureId, ColorImage>>>;

/// A kittest renderer that only keeps the textures up to date; pictures are drawn by
/// [`render`] from a frame's output.
pub struct TextureKeeper {
    textures: Textures,
    /// Freed by the last frame; egui frees "after painting", so they go at the next delta.
    to_free: Vec<TextureId>,
}

impl TextureKeeper {
    /// A keeper filling `textures`.
    pub fn new(textures: Textures) -> Self {
        Self {
            textures,
            to_free: Vec::new(),
        }
    }
}

impl egui_kittest::TestRenderer for TextureKeeper {
    fn handle_delta(&mut self, delta: &mut TexturesDelta) {
        let Ok(mut textures) = self.textures.lock() else {
            return;
        };
        for id in self.to_free.drain(..) {
            textures.remove(&id);
        }
        for (id, deltas) in &delta.set {
            for d in deltas {
                let egui::ImageData::Color(img) = &d.image;
                match d.pos {
                    None => {
                        textures.insert(*id, (**img).clone());
                    }
                    Some([x0, y0]) => {
                        if let Some(t) = textures.get_mut(id) {
                            for y in 0..img.size[1] {
                                for x in 0..img.size[0] {
                                    if x0 + x < t.size[0] && y0 + y < t.size[1] {
                                        t.pixels[(y0 + y) * t.size[0] + x0 + x] =
                                            img.pixels[y * img.size[0] + x];
                                    }
                                }
                            }
                        }
                    }
                }
            }
        }
        self.to_free.extend(delta.free.iter().copied());
    }
}

/// Draw a frame's output (`screen` in points) into an opaque image.
pub fn render(
    ctx: &egui::Context,
    output: &egui::FullOutput,
    textures: &Textures,
    screen: egui::Vec2,
) -> ColorImage {
    let ppp = output.pixels_per_point;
    let (w, h) = (
        (screen.x * ppp).round() as usize,
        (screen.y * ppp).round() as usize,
    );
    let mut px = vec![[0.0f32; 4]; w * h];
    let clear = ctx.global_style().visuals.panel_fill;
    for p in px.iter_mut() {
        *p = rgba(clear);
    }
    let primitives: Vec<ClippedPrimitive> = ctx.tessellate(output.shapes.clone(), ppp);
    let textures = textures.lock().expect("texture lock");
    for cp in &primitives {
        let Primitive::Mesh(mesh) = &cp.primitive else {
            continue;
        };
        let tex = textures.get(&mesh.texture_id);
        let clip = cp.clip_rect;
        let cx0 = ((clip.min.x * ppp).floor().max(0.0) as usize).min(w);
        let cy0 = ((clip.min.y * ppp).floor().max(0.0) as usize).min(h);
        let cx1 = ((clip.max.x * ppp).ceil().max(0.0) as usize).min(w);
        let cy1 = ((clip.max.y * ppp).ceil().max(0.0) as usize).min(h);
        for tri in mesh.indices.chunks_exact(3) {
            let v = [
                &mesh.vertices[tri[0] as usize],
                &mesh.vertices[tri[1] as usize],
                &mesh.vertices[tri[2] as usize],
            ];
            let p: Vec<[f32; 2]> = v.iter().map(|v| [v.pos.x * ppp, v.pos.y * ppp]).collect();
            let area = edge(p[0], p[1], p[2]);
            if area.abs() < 1e-9 {
                continue;
            }
            let minx = p
                .iter()
                .map(|q| q[0])
                .fold(f32::MAX, f32::min)
                .floor()
                .max(0.0) as usize;
            let maxx = p
                .iter()
                .map(|q| q[0])
                .fold(f32::MIN, f32::max)
                .ceil()
                .max(0.0) as usize;
            let miny = p
                .iter()
                .map(|q| q[1])
                .fold(f32::MAX, f32::min)
                .floor()
                .max(0.0) as usize;
            let maxy = p
                .iter()
                .map(|q| q[1])
                .fold(f32::MIN, f32::max)
                .ceil()
                .max(0.0) as usize;
            let cols: Vec<[f32; 4]> = v.iter().map(|v| rgba(v.color)).collect();
            for y in miny.max(cy0)..maxy.min(cy1) {
                for x in minx.max(cx0)..maxx.min(cx1) {
                    let c = [x as f32 + 0.5, y as f32 + 0.5];
                    let w0 = edge(p[1], p[2], c) / area;
                    let w1 = edge(p[2], p[0], c) / area;
                    let w2 = 1.0 - w0 - w1;
                    if w0 < 0.0 || w1 < 0.0 || w2 < 0.0 {
                        continue;
                    }
                    let mut src = [0.0f32; 4];
                    for (k, s) in src.iter_mut().enumerate() {
                        *s = w0 * cols[0][k] + w1 * cols[1][k] + w2 * cols[2][k];
                    }
                    if let Some(t) = tex {
                        let u = w0 * v[0].uv.x + w1 * v[1].uv.x + w2 * v[2].uv.x;
                        let vv = w0 * v[0].uv.y + w1 * v[1].uv.y + w2 * v[2].uv.y;
                        let tx = ((u * t.size[0] as f32) as usize).min(t.size[0] - 1);
                        let ty = ((vv * t.size[1] as f32) as usize).min(t.size[1] - 1);
                        let texel = rgba(t.pixels[ty * t.size[0] + tx]);
                        for k in 0..4 {
                            src[k] *= texel[k];
                        }
                    }
                    let d = &mut px[y * w + x];
                    for k in 0..4 {
                        d[k] = src[k] + d[k] * (1.0 - src[3]);
                    }
                }
            }
        }
    }
    let pixels = px
        .iter()
        .map(|p| {
            let q = |v: f32| (v.clamp(0.0, 1.0) * 255.0).round() as u8;
            Color32::from_rgb(q(p[0]), q(p[1]), q(p[2]))
        })
        .collect();
    ColorImage::new([w, h], pixels)
}

fn rgba(c: Color32) -> [f32; 4] {
    let [r, g, b, a] = c.to_array();
    [
        r as f32 / 255.0,
        g as f32 / 255.0,
        b as f32 / 255.0,
        a as f32 / 255.0,
    ]
}

fn edge(a: [f32; 2], b: [f32; 2], c: [f32; 2]) -> f32 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}
