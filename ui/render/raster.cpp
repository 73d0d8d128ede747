// Rasterizer — see raster.h for what it computes and the sources.
//
// Index
//   [pixels]     8-bit colour arithmetic: exact /255, modulate, blend, spans
//   [texture]    nearest-texel sampling, and why nearest
//   [snapping]   fixed-point coordinates and pixel-centre ranges
//   [triangle]   the general path: edge functions, spans per row, attributes
//   [rect]       the axis-aligned rectangle path
//   [draw]       walking ImDrawData
#include "ui/render/raster.h"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <utility>

#if defined(__SSE2__)
#include <immintrin.h>
#endif

namespace beatless::ui {

void PixelBuffer::resize(int w, int h) {
    width_px = std::max(w, 0);
    height_px = std::max(h, 0);
    pixels.resize(static_cast<std::size_t>(width_px) * static_cast<std::size_t>(height_px));
}

void PixelBuffer::clear(std::uint32_t color) noexcept { std::fill(pixels.begin(), pixels.end(), color); }

namespace {

// ---------------------------------------------------------------------------
// [SECTION] Pixels
// ---------------------------------------------------------------------------

// round(x / 255) for 0 <= x <= 255*255, exactly (Blinn 1995). Works on two
// 16-bit lanes of a 32-bit word at once when masked as in blend().
constexpr std::uint32_t div255(std::uint32_t x) { return (x + 128u + ((x + 128u) >> 8)) >> 8; }
constexpr std::uint32_t mul255(std::uint32_t a, std::uint32_t b) { return div255(a * b); }

constexpr std::uint32_t kLanes = 0x00FF00FFu;
constexpr std::uint32_t kRound = 0x00800080u;

// Vertex colour times texel, channel by channel (what a GPU's default
// texture environment does), rounded.
inline std::uint32_t modulate(std::uint32_t col, std::uint32_t tex) {
    if (tex == 0xFFFFFFFFu) return col;
    if ((tex & 0x00FFFFFFu) == 0x00FFFFFFu) return (col & 0x00FFFFFFu) | (mul255(col >> 24, tex >> 24) << 24);
    return mul255(col & 0xFF, tex & 0xFF) | (mul255((col >> 8) & 0xFF, (tex >> 8) & 0xFF) << 8) |
           (mul255((col >> 16) & 0xFF, (tex >> 16) & 0xFF) << 16) | (mul255(col >> 24, tex >> 24) << 24);
}

// One source colour prepared for blending with coverage a (0..255):
// out.rgb = (src.rgb*a + dst.rgb*(255-a)) / 255 and out.a = (255*a + dst.a*(255-a)) / 255,
// i.e. straight alpha for colour and "over" for the stored alpha.
struct Blender {
    std::uint32_t rb = 0;   // src R and B lanes times a, plus rounding
    std::uint32_t ag = 0;   // src G and (255 as) A lanes times a, plus rounding
    std::uint32_t inv = 0;  // 255 - a

    Blender(std::uint32_t src, std::uint32_t a) {
        const std::uint32_t s = src | 0xFF000000u;
        rb = (s & kLanes) * a + kRound;
        ag = ((s >> 8) & kLanes) * a + kRound;
        inv = 255u - a;
    }
    std::uint32_t operator()(std::uint32_t dst) const {
        std::uint32_t x = rb + (dst & kLanes) * inv;
        std::uint32_t y = ag + ((dst >> 8) & kLanes) * inv;
        x = ((x + ((x >> 8) & kLanes)) >> 8) & kLanes;
        y = (y + ((y >> 8) & kLanes)) & ~kLanes;
        return x | y;
    }
};

inline std::uint32_t blend(std::uint32_t src, std::uint32_t a, std::uint32_t dst) {
    if (a == 0) return dst;
    if (a == 255) return src | 0xFF000000u;
    return Blender(src, a)(dst);
}

// Rows of pixels. With SSE2 (every x86-64) four pixels go at a time, each
// channel in a 16-bit lane, with the same exact arithmetic as Blender; the
// scalar code is the reference and does the tails.

void fill_row(std::uint32_t* p, int n, std::uint32_t color) {
    int i = 0;
#if defined(__SSE2__)
    const __m128i c = _mm_set1_epi32(static_cast<int>(color));
    for (; i + 4 <= n; i += 4) _mm_storeu_si128(reinterpret_cast<__m128i*>(p + i), c);
#endif
    for (; i < n; ++i) p[i] = color;
}

#if defined(__SSE2__)
// (t + (t >> 8)) >> 8 per 16-bit lane: round(x / 255) when t = x + 128.
inline __m128i div255_epi16(__m128i t) { return _mm_srli_epi16(_mm_add_epi16(t, _mm_srli_epi16(t, 8)), 8); }
#endif

// One colour over a row with one coverage a, 0 < a < 255.
void blend_row(std::uint32_t* p, int n, std::uint32_t src, std::uint32_t a) {
    int i = 0;
#if defined(__SSE2__)
    const __m128i zero = _mm_setzero_si128();
    const __m128i s16 = _mm_unpacklo_epi8(_mm_set1_epi32(static_cast<int>(src | 0xFF000000u)), zero);
    const __m128i sa = _mm_add_epi16(_mm_mullo_epi16(s16, _mm_set1_epi16(static_cast<short>(a))), _mm_set1_epi16(128));
    const __m128i inv = _mm_set1_epi16(static_cast<short>(255 - a));
    for (; i + 4 <= n; i += 4) {
        const __m128i d = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p + i));
        const __m128i lo = _mm_add_epi16(_mm_mullo_epi16(_mm_unpacklo_epi8(d, zero), inv), sa);
        const __m128i hi = _mm_add_epi16(_mm_mullo_epi16(_mm_unpackhi_epi8(d, zero), inv), sa);
        _mm_storeu_si128(reinterpret_cast<__m128i*>(p + i), _mm_packus_epi16(div255_epi16(lo), div255_epi16(hi)));
    }
#endif
    const Blender b(src, a);
    for (; i < n; ++i) p[i] = b(p[i]);
}

// One RGB over a row with coverage cov[i] * ca / 255 per pixel (text).
void blend_coverage_row(std::uint32_t* p, const std::uint8_t* cov, int n, std::uint32_t rgb, std::uint32_t ca) {
    int i = 0;
#if defined(__SSE2__)
    const __m128i zero = _mm_setzero_si128();
    const __m128i s16 = _mm_unpacklo_epi8(_mm_set1_epi32(static_cast<int>(rgb | 0xFF000000u)), zero);
    const __m128i c255 = _mm_set1_epi16(255), c128 = _mm_set1_epi16(128), ca16 = _mm_set1_epi16(static_cast<short>(ca));
    for (; i + 4 <= n; i += 4) {
        std::uint32_t c4 = 0;
        std::memcpy(&c4, cov + i, 4);
        if (c4 == 0) continue;
        __m128i c = _mm_unpacklo_epi8(_mm_cvtsi32_si128(static_cast<int>(c4)), zero);  // c0 c1 c2 c3 (16-bit)
        if (ca != 255) c = div255_epi16(_mm_add_epi16(_mm_mullo_epi16(c, ca16), c128));
        c = _mm_unpacklo_epi16(c, c);                                                    // c0 c0 c1 c1 c2 c2 c3 c3
        const __m128i a_lo = _mm_unpacklo_epi32(c, c), a_hi = _mm_unpackhi_epi32(c, c);  // 4 lanes per pixel
        const __m128i d = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p + i));
        __m128i lo = _mm_mullo_epi16(_mm_unpacklo_epi8(d, zero), _mm_sub_epi16(c255, a_lo));
        __m128i hi = _mm_mullo_epi16(_mm_unpackhi_epi8(d, zero), _mm_sub_epi16(c255, a_hi));
        lo = _mm_add_epi16(_mm_add_epi16(lo, _mm_mullo_epi16(s16, a_lo)), c128);
        hi = _mm_add_epi16(_mm_add_epi16(hi, _mm_mullo_epi16(s16, a_hi)), c128);
        _mm_storeu_si128(reinterpret_cast<__m128i*>(p + i), _mm_packus_epi16(div255_epi16(lo), div255_epi16(hi)));
    }
#endif
    for (; i < n; ++i) {
        const std::uint32_t c = cov[i];
        if (c != 0) p[i] = blend(rgb, ca == 255 ? c : mul255(c, ca), p[i]);
    }
}

// A span of one colour (its alpha is the coverage).
void fill_span(std::uint32_t* p, int n, std::uint32_t color) {
    const std::uint32_t a = color >> 24;
    if (a == 0 || n <= 0) return;
    if (a == 255)
        fill_row(p, n, color);
    else
        blend_row(p, n, color, a);
}

inline int to_u8(float f) { return std::clamp(static_cast<int>(f + 0.5f), 0, 255); }

// ---------------------------------------------------------------------------
// [texture]
//
// Nearest texel: the texel whose square contains the sample point. The font
// atlas is built at the size it is drawn (no oversampling, glyph advances
// snapped to whole pixels, see imgui_host.cpp), so at integer text positions
// every pixel centre falls on a texel centre: nearest then reproduces the
// rasterized glyph exactly, as bilinear would, at one fetch instead of four,
// and where a position is fractional it shifts the glyph by under half a
// pixel instead of blurring it. Coordinates outside the texture clamp to the
// edge texel.
// ---------------------------------------------------------------------------

inline int texel_index(float t, int n) {
    if (!(t > 0.0f)) return 0;  // also NaN
    if (t >= static_cast<float>(n)) return n - 1;
    return static_cast<int>(t);
}

struct Sampler {
    const std::uint8_t* a8 = nullptr;
    const std::uint32_t* c32 = nullptr;
    int w = 1;
    int h = 1;

    explicit Sampler(const Texture* t) {
        if (t == nullptr || t->texels == nullptr || t->width_px <= 0 || t->height_px <= 0) return;
        w = t->width_px;
        h = t->height_px;
        if (t->format == TextureFormat::alpha8)
            a8 = static_cast<const std::uint8_t*>(t->texels);
        else
            c32 = static_cast<const std::uint32_t*>(t->texels);
    }
    bool white() const { return a8 == nullptr && c32 == nullptr; }
    std::uint32_t fetch(int tx, int ty) const {
        const std::size_t i = static_cast<std::size_t>(ty) * static_cast<std::size_t>(w) + static_cast<std::size_t>(tx);
        if (a8 != nullptr) return 0x00FFFFFFu | (static_cast<std::uint32_t>(a8[i]) << 24);
        if (c32 != nullptr) return c32[i];
        return 0xFFFFFFFFu;
    }
    // u, v in texels (normalised uv times size).
    std::uint32_t at(float u_tx, float v_tx) const {
        if (white()) return 0xFFFFFFFFu;
        return fetch(texel_index(u_tx, w), texel_index(v_tx, h));
    }
};

// ---------------------------------------------------------------------------
// [snapping]
//
// Coordinates are snapped to 1/256 pixel (8 sub-pixel bits, the precision
// the Direct3D 10 rules ask of hardware) and clamped to +-2^20 pixels, so
// edge functions fit comfortably in 64 bits.
// ---------------------------------------------------------------------------

constexpr int kSubBits = 8;
constexpr std::int64_t kSub = std::int64_t{1} << kSubBits;
constexpr std::int64_t kHalf = kSub / 2;
constexpr float kMaxCoordPx = static_cast<float>(1 << 20);

// Rounds to the nearest 1/256 pixel (ties to even). On x86-64 one
// instruction; std::llrint would be a library call per coordinate.
inline std::int64_t snap(float px) {
    const float s = std::clamp(px, -kMaxCoordPx, kMaxCoordPx) * static_cast<float>(kSub);
#if defined(__SSE2__) && defined(__x86_64__)
    return _mm_cvtss_si64(_mm_set_ss(s));
#else
    return std::llrint(s);
#endif
}

// Index of the first pixel whose centre (i + 0.5) * kSub is >= v.
inline std::int64_t first_px(std::int64_t v) { return (v - kHalf + kSub - 1) >> kSubBits; }

struct PixRect {
    int x0 = 0, y0 = 0, x1 = 0, y1 = 0;  // half-open
    bool empty() const { return x0 >= x1 || y0 >= y1; }
};

inline int clamp_px(std::int64_t v, int lo, int hi) { return static_cast<int>(std::clamp<std::int64_t>(v, lo, hi)); }

struct Snapped {
    std::int64_t x = 0, y = 0;  // 1/256 pixel
    float u = 0.0f, v = 0.0f;   // texels
    std::uint32_t col = 0;
};

inline std::int64_t floor_div(std::int64_t n, std::int64_t d) {  // d > 0
    return n >= 0 ? n / d : -((-n + d - 1) / d);
}

// ---------------------------------------------------------------------------
// [SECTION] Triangle
// ---------------------------------------------------------------------------

struct Surface {
    std::uint32_t* pixels;
    int stride;
};

// One edge a->b as E(p) = A*p.x + B*p.y + C, positive inside for a triangle
// with positive area. The top-left rule: a pixel centre exactly on the edge
// is inside when the edge is a left edge (A > 0: inside lies towards +x) or
// a top edge (horizontal, B > 0: inside lies below, y pointing down).
//
// On a row, pixel x is inside when A*(kSub*x + kHalf) + B*yc + C >= bias
// (bias 0 on a top or left edge, else 1), i.e. kSub*A*x >= n with
// n = bias - B*yc - C - kHalf*A. So a left-side edge (A > 0) bounds the span
// below by ceil(n / d), a right-side edge (A < 0) above by floor(-n / d),
// with d = kSub*|A|. n changes by -kSub*B per row; the quotient q and
// remainder r of n / d are stepped exactly from row to row (as a line is in
// Bresenham's algorithm), so there is no division per row.
struct Edge {
    std::int64_t q = 0;   // floor(n / d)
    std::int64_t r = 0;   // n - q*d, 0 <= r < d
    std::int64_t qs = 0;  // floor(step / d)
    std::int64_t rs = 0;  // step - qs*d
    std::int64_t d = 1;   // kSub*|A|; 1 for a horizontal edge (then q = n)
    int side = 0;         // +1 bounds the span below, -1 above, 0 horizontal

    Edge(const Snapped& p, const Snapped& p_next, std::int64_t first_row_centre) {
        const std::int64_t a = p.y - p_next.y;
        const std::int64_t b = p_next.x - p.x;
        const std::int64_t c = -(a * p.x + b * p.y);
        const std::int64_t bias = (a > 0 || (a == 0 && b > 0)) ? 0 : 1;
        const std::int64_t n = bias - b * first_row_centre - c - kHalf * a;
        const std::int64_t step = -kSub * b;
        side = a > 0 ? 1 : a < 0 ? -1 : 0;
        if (a != 0) d = kSub * (a < 0 ? -a : a);
        q = floor_div(n, d);
        r = n - q * d;
        qs = floor_div(step, d);
        rs = step - qs * d;
    }
    // Narrows [x0, x1) to the pixels inside this edge on the current row.
    void bound(std::int64_t& x0, std::int64_t& x1) const {
        const std::int64_t ceil_q = q + (r != 0 ? 1 : 0);  // ceil(n / d)
        if (side > 0)
            x0 = std::max(x0, ceil_q);
        else if (side < 0)
            x1 = std::min(x1, 1 - ceil_q);
        else if (q > 0)
            x1 = x0;  // horizontal edge with the row outside
    }
    void next_row() {
        q += qs;
        r += rs;
        if (r >= d) {
            r -= d;
            ++q;
        }
    }
};

// An attribute interpolated over the triangle: value at pixel centre (x, y)
// is base + dx * x + dy * y (x, y as pixel indices).
struct Plane {
    float base = 0.0f, dx = 0.0f, dy = 0.0f;
    float at(int x, int y) const { return base + dx * static_cast<float>(x) + dy * static_cast<float>(y); }
};

struct PlaneSetup {
    double x0, y0, e1x, e1y, e2x, e2y, inv_area;
    PlaneSetup(const Snapped& p0, const Snapped& p1, const Snapped& p2) {
        const double s = 1.0 / static_cast<double>(kSub);
        x0 = static_cast<double>(p0.x) * s;
        y0 = static_cast<double>(p0.y) * s;
        e1x = static_cast<double>(p1.x - p0.x) * s;
        e1y = static_cast<double>(p1.y - p0.y) * s;
        e2x = static_cast<double>(p2.x - p0.x) * s;
        e2y = static_cast<double>(p2.y - p0.y) * s;
        inv_area = 1.0 / (e1x * e2y - e2x * e1y);
    }
    Plane plane(double a0, double a1, double a2) const {
        const double dx = ((a1 - a0) * e2y - (a2 - a0) * e1y) * inv_area;
        const double dy = ((a2 - a0) * e1x - (a1 - a0) * e2x) * inv_area;
        // value at pixel centre (x + 0.5, y + 0.5)
        const double base = a0 + dx * (0.5 - x0) + dy * (0.5 - y0);
        return {static_cast<float>(base), static_cast<float>(dx), static_cast<float>(dy)};
    }
};

inline float channel(std::uint32_t c, int shift) { return static_cast<float>((c >> shift) & 0xFF); }

// The same inside test for a triangle whose bounding box is at most
// kSmallSub on a side, evaluated at every pixel centre of its (clipped) box
// with 32-bit edge values relative to the box: cheaper than setting up the
// row quotients when a triangle covers a handful of pixels (line segments,
// the fringes of anti-aliased edges, arc pieces). Same predicate, same pixels.
constexpr std::int64_t kSmallSub = 16 * kSub;

struct SmallEdge {
    std::int32_t e = 0;       // E - bias at the first pixel centre of the box, on the current row
    std::int32_t step_x = 0;  // kSub * A
    std::int32_t step_y = 0;  // kSub * B
    SmallEdge(const Snapped& p, const Snapped& p_next, std::int64_t ox, std::int64_t oy) {
        const auto a = static_cast<std::int32_t>(p.y - p_next.y);
        const auto b = static_cast<std::int32_t>(p_next.x - p.x);
        const std::int32_t bias = (a > 0 || (a == 0 && b > 0)) ? 0 : 1;
        e = a * static_cast<std::int32_t>(ox - p.x) + b * static_cast<std::int32_t>(oy - p.y) - bias;
        step_x = static_cast<std::int32_t>(kSub) * a;
        step_y = static_cast<std::int32_t>(kSub) * b;
    }
};

// Calls span(y, x0, x1) for every row of pixel centres inside the triangle
// (positive area), within clip.
template <class Span>
void scan(const Snapped& p0, const Snapped& p1, const Snapped& p2, const PixRect& clip, Span&& span) {
    const std::int64_t ylo = std::min({p0.y, p1.y, p2.y}), yhi = std::max({p0.y, p1.y, p2.y});
    const std::int64_t xlo = std::min({p0.x, p1.x, p2.x}), xhi = std::max({p0.x, p1.x, p2.x});
    const int ry0 = clamp_px(first_px(ylo), clip.y0, clip.y1);
    const int ry1 = clamp_px(first_px(yhi + 1), clip.y0, clip.y1);
    const int cx0 = clamp_px(first_px(xlo), clip.x0, clip.x1);
    const int cx1 = clamp_px(first_px(xhi + 1), clip.x0, clip.x1);
    if (ry0 >= ry1 || cx0 >= cx1) return;

    if (xhi - xlo <= kSmallSub && yhi - ylo <= kSmallSub) {
        const std::int64_t ox = static_cast<std::int64_t>(cx0) * kSub + kHalf;
        const std::int64_t oy = static_cast<std::int64_t>(ry0) * kSub + kHalf;
        SmallEdge e0(p0, p1, ox, oy), e1(p1, p2, ox, oy), e2(p2, p0, ox, oy);
        for (int y = ry0; y < ry1; ++y) {
            std::int32_t a = e0.e, b = e1.e, c = e2.e;
            int x = cx0;
            while (x < cx1 && (a | b | c) < 0) {  // outside: find the first pixel inside
                a += e0.step_x;
                b += e1.step_x;
                c += e2.step_x;
                ++x;
            }
            const int first = x;
            while (x < cx1 && (a | b | c) >= 0) {  // inside pixels are contiguous (convexity)
                a += e0.step_x;
                b += e1.step_x;
                c += e2.step_x;
                ++x;
            }
            if (x > first) span(y, first, x);
            e0.e += e0.step_y;
            e1.e += e1.step_y;
            e2.e += e2.step_y;
        }
        return;
    }

    const std::int64_t yc = static_cast<std::int64_t>(ry0) * kSub + kHalf;
    Edge e0(p0, p1, yc), e1(p1, p2, yc), e2(p2, p0, yc);
    for (int y = ry0; y < ry1; ++y) {
        std::int64_t x0 = cx0, x1 = cx1;
        e0.bound(x0, x1);
        e1.bound(x0, x1);
        e2.bound(x0, x1);
        if (x0 < x1) span(y, static_cast<int>(x0), static_cast<int>(x1));
        e0.next_row();
        e1.next_row();
        e2.next_row();
    }
}

// Shading by what varies over the triangle (decided once per triangle).
enum class Shade {
    flat,   // one colour, one texel: spans of one colour
    alpha,  // one RGB, alpha interpolated, one texel: anti-aliased fringes
    full,   // colour and/or texture coordinates interpolated
};

// Draws one triangle; returns false when it has no area.
bool draw_triangle(Surface& s, const Snapped& p0, const Snapped& q1, const Snapped& q2, const PixRect& clip,
                   const Sampler& tex) {
    const std::int64_t area2 = (q1.x - p0.x) * (q2.y - p0.y) - (q2.x - p0.x) * (q1.y - p0.y);
    if (area2 == 0) return false;
    const Snapped& p1 = area2 > 0 ? q1 : q2;  // counter-clockwise on screen (y down): positive area
    const Snapped& p2 = area2 > 0 ? q2 : q1;

    const bool col_const = p0.col == p1.col && p0.col == p2.col;
    const bool rgb_const = ((p0.col ^ p1.col) & 0x00FFFFFFu) == 0 && ((p0.col ^ p2.col) & 0x00FFFFFFu) == 0;
    const bool uv_const = tex.white() || (p0.u == p1.u && p0.u == p2.u && p0.v == p1.v && p0.v == p2.v);
    const std::uint32_t const_texel = uv_const ? tex.at(p0.u, p0.v) : 0xFFFFFFFFu;
    const Shade shade = !uv_const ? Shade::full : col_const ? Shade::flat : rgb_const ? Shade::alpha : Shade::full;

    if (shade == Shade::flat) {
        const std::uint32_t color = modulate(p0.col, const_texel);
        const std::uint32_t a = color >> 24;
        if (a == 0) return true;
        if (a == 255) {
            scan(p0, p1, p2, clip, [&](int y, int x0, int x1) {
                fill_row(s.pixels + static_cast<std::ptrdiff_t>(y) * s.stride + x0, x1 - x0, color);
            });
        } else {
            const Blender blender(color, a);
            scan(p0, p1, p2, clip, [&](int y, int x0, int x1) {
                std::uint32_t* row = s.pixels + static_cast<std::ptrdiff_t>(y) * s.stride;
                if (x1 - x0 >= 8)
                    blend_row(row + x0, x1 - x0, color, a);
                else
                    for (int x = x0; x < x1; ++x) row[x] = blender(row[x]);
            });
        }
        return true;
    }

    const PlaneSetup ps(p0, p1, p2);
    if (shade == Shade::alpha) {
        // Texel alpha folds into the plane: a(x) = col.a(x) * texel.a / 255.
        const std::uint32_t rgb = modulate(p0.col | 0xFF000000u, const_texel) & 0x00FFFFFFu;
        const float t = static_cast<float>(const_texel >> 24) / 255.0f;
        const Plane a = ps.plane(channel(p0.col, 24) * t, channel(p1.col, 24) * t, channel(p2.col, 24) * t);
        scan(p0, p1, p2, clip, [&](int y, int x0, int x1) {
            std::uint32_t* row = s.pixels + static_cast<std::ptrdiff_t>(y) * s.stride;
            const float a0 = a.at(x0, y);
            for (int x = x0; x < x1; ++x)
                row[x] = blend(rgb, static_cast<std::uint32_t>(to_u8(a0 + static_cast<float>(x - x0) * a.dx)), row[x]);
        });
        return true;
    }

    const Plane r = ps.plane(channel(p0.col, 0), channel(p1.col, 0), channel(p2.col, 0));
    const Plane g = ps.plane(channel(p0.col, 8), channel(p1.col, 8), channel(p2.col, 8));
    const Plane b = ps.plane(channel(p0.col, 16), channel(p1.col, 16), channel(p2.col, 16));
    const Plane a = ps.plane(channel(p0.col, 24), channel(p1.col, 24), channel(p2.col, 24));
    const Plane u = ps.plane(p0.u, p1.u, p2.u);
    const Plane v = ps.plane(p0.v, p1.v, p2.v);
    scan(p0, p1, p2, clip, [&](int y, int x0, int x1) {
        std::uint32_t* row = s.pixels + static_cast<std::ptrdiff_t>(y) * s.stride;
        const float r0 = r.at(x0, y), g0 = g.at(x0, y), b0 = b.at(x0, y), a0 = a.at(x0, y);
        const float u0 = u.at(x0, y), v0 = v.at(x0, y);
        for (int x = x0; x < x1; ++x) {
            const float k = static_cast<float>(x - x0);
            std::uint32_t col = p0.col;
            if (!col_const) {
                col = static_cast<std::uint32_t>(to_u8(r0 + k * r.dx)) |
                      (static_cast<std::uint32_t>(to_u8(g0 + k * g.dx)) << 8) |
                      (static_cast<std::uint32_t>(to_u8(b0 + k * b.dx)) << 16) |
                      (static_cast<std::uint32_t>(to_u8(a0 + k * a.dx)) << 24);
            }
            const std::uint32_t texel = uv_const ? const_texel : tex.at(u0 + k * u.dx, v0 + k * v.dx);
            const std::uint32_t src = modulate(col, texel);
            row[x] = blend(src, src >> 24, row[x]);
        }
    });
    return true;
}

// ---------------------------------------------------------------------------
// [rect]
//
// ImGui's PrimRect and PrimRectUV write four vertices a, b, c, d around an
// axis-aligned rectangle and the indices (0, 1, 2) (0, 2, 3). With one colour
// and a texture coordinate that depends on x alone (u) and y alone (v), the
// pair covers exactly the pixel centres with x0 <= xc < x1 and y0 <= yc < y1
// (the top-left rule applied to both triangles; the shared diagonal is drawn
// once), so it is filled row by row without edge functions.
// ---------------------------------------------------------------------------

bool separable_rect(const ImDrawVert& a, const ImDrawVert& b, const ImDrawVert& c, const ImDrawVert& d) {
    if (a.col != b.col || a.col != c.col || a.col != d.col) return false;
    if (a.pos.y == b.pos.y && b.pos.x == c.pos.x && c.pos.y == d.pos.y && d.pos.x == a.pos.x)
        return a.uv.y == b.uv.y && c.uv.y == d.uv.y && b.uv.x == c.uv.x && d.uv.x == a.uv.x;
    if (a.pos.x == b.pos.x && b.pos.y == c.pos.y && c.pos.x == d.pos.x && d.pos.y == a.pos.y)
        return a.uv.x == b.uv.x && c.uv.x == d.uv.x && b.uv.y == c.uv.y && d.uv.y == a.uv.y;
    return false;
}

// a and c are opposite corners (snapped), with their texture coordinates.
void draw_rect(Surface& s, const Snapped& a, const Snapped& c, const PixRect& clip, const Sampler& tex) {
    const int x0 = clamp_px(first_px(std::min(a.x, c.x)), clip.x0, clip.x1);
    const int x1 = clamp_px(first_px(std::max(a.x, c.x)), clip.x0, clip.x1);
    const int y0 = clamp_px(first_px(std::min(a.y, c.y)), clip.y0, clip.y1);
    const int y1 = clamp_px(first_px(std::max(a.y, c.y)), clip.y0, clip.y1);
    if (x0 >= x1 || y0 >= y1) return;
    const int w = x1 - x0;

    if (tex.white() || (a.u == c.u && a.v == c.v)) {
        const std::uint32_t color = modulate(a.col, tex.at(a.u, a.v));
        for (int y = y0; y < y1; ++y) fill_span(s.pixels + static_cast<std::ptrdiff_t>(y) * s.stride + x0, w, color);
        return;
    }

    // Texture coordinate (texels) at pixel centre x: u(x) = u_x0 + du * (x - x0).
    const double s_px = 1.0 / static_cast<double>(kSub);
    const double ax = static_cast<double>(a.x) * s_px, cx = static_cast<double>(c.x) * s_px;
    const double ay = static_cast<double>(a.y) * s_px, cy = static_cast<double>(c.y) * s_px;
    const double du = (static_cast<double>(c.u) - a.u) / (cx - ax);
    const double dv = (static_cast<double>(c.v) - a.v) / (cy - ay);
    const double u_x0 = a.u + (x0 + 0.5 - ax) * du;
    const std::uint32_t col = a.col;
    const std::uint32_t ca = col >> 24;
    if (ca == 0) return;

    // Texel columns: at 1:1 scale they are consecutive (glyphs, the usual case).
    const int tx0 = texel_index(static_cast<float>(u_x0), tex.w);
    const bool consecutive = du == 1.0 && static_cast<double>(tx0) + 0.5 == u_x0 && tx0 + w <= tex.w;

    for (int y = y0; y < y1; ++y) {
        const int ty = texel_index(static_cast<float>(a.v + (y + 0.5 - ay) * dv), tex.h);
        std::uint32_t* row = s.pixels + static_cast<std::ptrdiff_t>(y) * s.stride + x0;
        if (tex.a8 != nullptr && consecutive) {
            const std::uint8_t* t =
                tex.a8 + static_cast<std::size_t>(ty) * static_cast<std::size_t>(tex.w) + static_cast<std::size_t>(tx0);
            blend_coverage_row(row, t, w, col & 0x00FFFFFFu, ca);
            continue;
        }
        for (int i = 0; i < w; ++i) {
            const int tx = consecutive ? tx0 + i : texel_index(static_cast<float>(u_x0 + du * i), tex.w);
            const std::uint32_t src = modulate(col, tex.fetch(tx, ty));
            row[i] = blend(src, src >> 24, row[i]);
        }
    }
}

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Draw
// ---------------------------------------------------------------------------

void Rasterizer::draw_elements(PixelBuffer& target, std::span<const ImDrawVert> vertices,
                               std::span<const ImDrawIdx> indices, const ImVec4& clip_rect, const Texture* texture,
                               const Transform& xf) noexcept {
    if (target.width_px <= 0 || target.height_px <= 0) return;
    const float cx0 = (clip_rect.x - xf.offset_x) * xf.scale_x, cy0 = (clip_rect.y - xf.offset_y) * xf.scale_y;
    const float cx1 = (clip_rect.z - xf.offset_x) * xf.scale_x, cy1 = (clip_rect.w - xf.offset_y) * xf.scale_y;
    if (!(std::isfinite(cx0) && std::isfinite(cy0) && std::isfinite(cx1) && std::isfinite(cy1))) return;
    PixRect clip;
    clip.x0 = clamp_px(first_px(snap(cx0)), 0, target.width_px);
    clip.x1 = clamp_px(first_px(snap(cx1)), 0, target.width_px);
    clip.y0 = clamp_px(first_px(snap(cy0)), 0, target.height_px);
    clip.y1 = clamp_px(first_px(snap(cy1)), 0, target.height_px);
    if (clip.empty()) return;

    Surface surf{target.pixels.data(), target.width_px};
    const Sampler tex(texture);
    const float tw = static_cast<float>(tex.w), th = static_cast<float>(tex.h);
    const std::size_t nv = vertices.size();

    auto snapped = [&](const ImDrawVert& v) {
        Snapped p;
        p.x = snap((v.pos.x - xf.offset_x) * xf.scale_x);
        p.y = snap((v.pos.y - xf.offset_y) * xf.scale_y);
        p.u = v.uv.x * tw;
        p.v = v.uv.y * th;
        p.col = v.col;
        return p;
    };
    auto finite = [](const ImDrawVert& v) { return std::isfinite(v.pos.x) && std::isfinite(v.pos.y); };

    const std::size_t ni = indices.size() - indices.size() % 3;
    for (std::size_t i = 0; i < ni; i += 3) {
        const std::size_t i0 = indices[i], i1 = indices[i + 1], i2 = indices[i + 2];
        if (i0 >= nv || i1 >= nv || i2 >= nv) {
            ++stats_.skipped;
            continue;
        }
        const ImDrawVert &v0 = vertices[i0], &v1 = vertices[i1], &v2 = vertices[i2];
        if (!(finite(v0) && finite(v1) && finite(v2))) {
            ++stats_.skipped;
            continue;
        }
        if (config_.rect_fast_path && i + 5 < ni && indices[i + 3] == i0 && indices[i + 4] == i2 &&
            indices[i + 5] < nv) {
            const ImDrawVert& v3 = vertices[indices[i + 5]];
            if (finite(v3) && separable_rect(v0, v1, v2, v3)) {
                draw_rect(surf, snapped(v0), snapped(v2), clip, tex);
                ++stats_.rects;
                i += 3;
                continue;
            }
        }
        const Snapped s0 = snapped(v0), s1 = snapped(v1), s2 = snapped(v2);
        if (draw_triangle(surf, s0, s1, s2, clip, tex))
            ++stats_.triangles;
        else
            ++stats_.skipped;
    }
}

void Rasterizer::draw_triangles(PixelBuffer& target, std::span<const ImDrawVert> vertices,
                                std::span<const ImDrawIdx> indices, const ImVec4& clip_rect,
                                const Texture* texture) noexcept {
    draw_elements(target, vertices, indices, clip_rect, texture, Transform{});
}

void Rasterizer::draw(const ImDrawData& data, PixelBuffer& target) noexcept {
    if (!data.Valid) return;
    const Transform xf{data.DisplayPos.x, data.DisplayPos.y, data.FramebufferScale.x, data.FramebufferScale.y};
    for (int n = 0; n < data.CmdListsCount; ++n) {
        const ImDrawList* list = data.CmdLists[n];
        const auto nv = static_cast<std::size_t>(list->VtxBuffer.Size);
        const auto ni = static_cast<std::size_t>(list->IdxBuffer.Size);
        for (const ImDrawCmd& cmd : list->CmdBuffer) {
            ++stats_.commands;
            if (cmd.UserCallback != nullptr) {
                if (cmd.UserCallback != ImDrawCallback_ResetRenderState) cmd.UserCallback(list, &cmd);
                continue;
            }
            if (cmd.IdxOffset > ni || cmd.ElemCount > ni - cmd.IdxOffset || cmd.VtxOffset > nv) continue;
            const std::span<const ImDrawVert> vtx(list->VtxBuffer.Data + cmd.VtxOffset, nv - cmd.VtxOffset);
            const std::span<const ImDrawIdx> idx(list->IdxBuffer.Data + cmd.IdxOffset, cmd.ElemCount);
            draw_elements(target, vtx, idx, cmd.ClipRect, static_cast<const Texture*>(cmd.GetTexID()), xf);
        }
    }
}

}  // namespace beatless::ui
