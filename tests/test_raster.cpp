// Tests of the CPU rasterizer, the PNG writer and the offscreen ImGui host.
//
// Index
//   [helpers]    vertices, an independent point-in-triangle test in double
//   [coverage]   rectangles and triangles against the reference sets
//   [edges]      shared edges drawn once
//   [blending]   straight alpha against the formula, interpolation
//   [clipping]   clip rectangles
//   [texture]    nearest sampling, the font atlas
//   [robustness] bad input, allocation
//   [png]        PNG round trip and errors
//   [host]       fonts, DPI scale, fallback
//
// Sources named beside the checks:
//   top-left rule: Direct3D 10 rasterization rules (Microsoft docs,
//     "Rasterization Rules"), a pixel is covered when its centre lies inside
//     the triangle, or on a top edge (exactly horizontal, the triangle below
//     it) or a left edge (not horizontal, the triangle to its right); common
//     practice in software rasterizers.
//   blending: Porter & Duff, "Compositing digital images", SIGGRAPH 1984
//     ("over"); ImGui's OpenGL backends blend colour with
//     glBlendFunc(GL_SRC_ALPHA, GL_ONE_MINUS_SRC_ALPHA) (OpenGL 2.1 spec,
//     section 4.1.8), i.e. out = src*a + dst*(1-a), 8-bit values rounded.
//   interpolation: vertex attributes are linear in screen space over a
//     triangle (barycentric; OpenGL 2.1 spec, section 3.5.1, without the
//     perspective term since w = 1).
//   texture: nearest filtering takes the texel containing the sample point,
//     floor(u * width) (OpenGL 2.1 spec, section 3.8.8, GL_NEAREST).
//   PNG: read back with stb_image (libstb-dev), an independent decoder.
#include "tests/demo_screen.h"
#include "ui/render/imgui_host.h"
#include "ui/render/png.h"
#include "ui/render/raster.h"
#include "ui/render/render_error.h"

#include <doctest/doctest.h>
#include <stb_image.h>

#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <new>
#include <random>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::ui;

// ---------------------------------------------------------------------------
// Allocation counting (for "no allocation per frame"): every operator new of
// this test program is counted while `g_count_allocs` is set.
// ---------------------------------------------------------------------------
namespace {
std::atomic<bool> g_count_allocs{false};
std::atomic<long> g_allocs{0};
}  // namespace

void* operator new(std::size_t n) {
    if (g_count_allocs.load(std::memory_order_relaxed)) g_allocs.fetch_add(1, std::memory_order_relaxed);
    if (void* p = std::malloc(n == 0 ? 1 : n)) return p;
    throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }

namespace {

// ---------------------------------------------------------------------------
// [SECTION] Helpers
// ---------------------------------------------------------------------------

constexpr int kW = 64, kH = 48;
constexpr std::uint32_t kBlack = rgba(0, 0, 0, 255);
constexpr std::uint32_t kWhite = rgba(255, 255, 255, 255);
const ImVec4 kNoClip(-1e6f, -1e6f, 1e6f, 1e6f);

ImDrawVert vert(double x, double y, std::uint32_t col = kWhite, float u = 0.0f, float v = 0.0f) {
    ImDrawVert d;
    d.pos = ImVec2(static_cast<float>(x), static_cast<float>(y));
    d.uv = ImVec2(u, v);
    d.col = col;
    return d;
}

struct Mesh {
    std::vector<ImDrawVert> vtx;
    std::vector<ImDrawIdx> idx;
    void tri(const ImDrawVert& a, const ImDrawVert& b, const ImDrawVert& c) {
        const auto base = static_cast<ImDrawIdx>(vtx.size());
        vtx.insert(vtx.end(), {a, b, c});
        idx.insert(idx.end(), {base, static_cast<ImDrawIdx>(base + 1), static_cast<ImDrawIdx>(base + 2)});
    }
    // ImGui's PrimRect layout: a, (b.x, a.y), b, (a.x, b.y); indices 0 1 2, 0 2 3.
    void rect(double x0, double y0, double x1, double y1, std::uint32_t col, ImVec2 uv0 = {}, ImVec2 uv1 = {}) {
        const auto base = static_cast<ImDrawIdx>(vtx.size());
        vtx.push_back(vert(x0, y0, col, uv0.x, uv0.y));
        vtx.push_back(vert(x1, y0, col, uv1.x, uv0.y));
        vtx.push_back(vert(x1, y1, col, uv1.x, uv1.y));
        vtx.push_back(vert(x0, y1, col, uv0.x, uv1.y));
        for (int k : {0, 1, 2, 0, 2, 3}) idx.push_back(static_cast<ImDrawIdx>(base + k));
    }
};

void draw(PixelBuffer& buf, const Mesh& m, const ImVec4& clip = kNoClip, const Texture* tex = nullptr, bool fast = true,
          Rasterizer* used = nullptr) {
    RasterConfig cfg;
    cfg.rect_fast_path = fast;
    Rasterizer r(cfg);
    r.draw_triangles(buf, m.vtx, m.idx, clip, tex);
    if (used != nullptr) *used = r;
}

PixelBuffer cleared(std::uint32_t c = kBlack, int w = kW, int h = kH) {
    PixelBuffer b;
    b.resize(w, h);
    b.clear(c);
    return b;
}

unsigned red(std::uint32_t c) { return c & 0xFF; }
unsigned chan(std::uint32_t c, int i) { return (c >> (8 * i)) & 0xFF; }

// The reference point-in-triangle test with the Direct3D 10 top-left rule,
// in double (exact here: coordinates are multiples of 1/256 below 2^10).
struct P {
    double x, y;
};
double cross(P a, P b, P p) { return (b.x - a.x) * (p.y - a.y) - (b.y - a.y) * (p.x - a.x); }

// Edge a-b of triangle abc: a top edge is exactly horizontal with the third
// vertex below it (y grows downwards); a left edge is not horizontal and has
// the triangle to its right (c lies right of the edge's line at c's height).
bool top_or_left(P a, P b, P c) {
    if (a.y == b.y) return c.y > a.y;
    const double x_at_c = a.x + (c.y - a.y) * (b.x - a.x) / (b.y - a.y);
    return c.x > x_at_c;
}

bool inside(P p, P a, P b, P c) {
    const double area = cross(a, b, c);
    if (area == 0.0) return false;
    const double s = area > 0 ? 1.0 : -1.0;
    const P e[3][3] = {{a, b, c}, {b, c, a}, {c, a, b}};
    for (const auto& t : e) {
        const double w = s * cross(t[0], t[1], p);
        if (w < 0.0) return false;
        if (w == 0.0 && !top_or_left(t[0], t[1], t[2])) return false;
    }
    return true;
}

HostConfig host_config(int width_px, int height_px, float dpi_scale = 1.0f) {
    HostConfig hc;
    hc.width_px = width_px;
    hc.height_px = height_px;
    hc.dpi_scale = dpi_scale;
    hc.fit_width_px = 0;  // fonts at exactly the configured sizes, whatever the display
    return hc;
}

// One frame of the test screen at time t_s.
ImDrawData& demo_frame(ImGuiHost& host, testing::DemoScreen& demo, float t_s) {
    host.new_frame(1.0f / 60.0f, host.config().width_px, host.config().height_px);
    demo.build(t_s);
    return host.render();
}

// A coordinate on the 1/256 grid: often a pixel centre or a pixel corner, so
// that ties with the pixel centres happen often.
double grid_coord(std::mt19937& rng, double lo, double hi) {
    std::uniform_real_distribution<double> u(lo, hi);
    const double v = u(rng);
    switch (rng() % 3) {
        case 0: return std::floor(v) + 0.5;
        case 1: return std::floor(v);
        default: return std::round(v * 256.0) / 256.0;
    }
}

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Coverage
// ---------------------------------------------------------------------------

TEST_CASE(
    "axis-aligned rectangles cover exactly the pixel centres x0 <= xc < x1, y0 <= yc < y1 (top-left rule, D3D10)") {
    std::mt19937 rng(7);
    int rects_checked = 0;
    for (int n = 0; n < 400; ++n) {
        double x0 = grid_coord(rng, -4, kW + 4), x1 = grid_coord(rng, -4, kW + 4);
        double y0 = grid_coord(rng, -4, kH + 4), y1 = grid_coord(rng, -4, kH + 4);
        if (x0 > x1) std::swap(x0, x1);
        if (y0 > y1) std::swap(y0, y1);
        Mesh m;
        m.rect(x0, y0, x1, y1, kWhite);
        for (bool fast : {true, false}) {
            PixelBuffer b = cleared();
            Rasterizer used;
            draw(b, m, kNoClip, nullptr, fast, &used);
            if (fast && x0 < x1 && y0 < y1) CHECK(used.stats().rects == 1);  // the span path was taken
            int wrong = 0;
            for (int y = 0; y < kH; ++y)
                for (int x = 0; x < kW; ++x) {
                    const bool expect = x0 <= x + 0.5 && x + 0.5 < x1 && y0 <= y + 0.5 && y + 0.5 < y1;
                    if ((b.at(x, y) == kWhite) != expect) ++wrong;
                }
            CHECK_MESSAGE(wrong == 0, "rect ", x0, ",", y0, " - ", x1, ",", y1, (fast ? " span path" : " edge path"));
        }
        ++rects_checked;
    }
    CHECK(rects_checked == 400);
}

TEST_CASE(
    "triangle coverage equals pixel-centre sampling with an independent point-in-triangle test (D3D10 top-left rule)") {
    std::mt19937 rng(11);
    int covered_total = 0, ties = 0;
    for (int n = 0; n < 3000; ++n) {
        // Small (< 16 px, the per-pixel walk) and large (the row-quotient walk) triangles.
        const double size = n % 2 == 0 ? 12.0 : 70.0;
        const double cx = grid_coord(rng, -2, kW + 2), cy = grid_coord(rng, -2, kH + 2);
        P a{grid_coord(rng, cx - size / 2, cx + size / 2), grid_coord(rng, cy - size / 2, cy + size / 2)};
        P b{grid_coord(rng, cx - size / 2, cx + size / 2), grid_coord(rng, cy - size / 2, cy + size / 2)};
        P c{grid_coord(rng, cx - size / 2, cx + size / 2), grid_coord(rng, cy - size / 2, cy + size / 2)};
        if (n % 5 == 1) b.y = a.y;  // horizontal edges: top or bottom
        if (n % 5 == 2) c.x = a.x;  // vertical edges: left or right
        Mesh m;
        m.tri(vert(a.x, a.y), vert(b.x, b.y), vert(c.x, c.y));
        PixelBuffer buf = cleared();
        draw(buf, m);
        int wrong = 0;
        for (int y = 0; y < kH; ++y)
            for (int x = 0; x < kW; ++x) {
                const P p{x + 0.5, y + 0.5};
                const bool expect = inside(p, a, b, c);
                if (expect) ++covered_total;
                if (cross(a, b, p) == 0 || cross(b, c, p) == 0 || cross(c, a, p) == 0) ++ties;
                if ((buf.at(x, y) == kWhite) != expect) ++wrong;
            }
        CHECK_MESSAGE(wrong == 0, "triangle (", a.x, ",", a.y, ") (", b.x, ",", b.y, ") (", c.x, ",", c.y, ")");
    }
    // The sample really exercises coverage and the tie-breaking rule.
    CHECK(covered_total > 100000);
    CHECK(ties > 1000);
}

// ---------------------------------------------------------------------------
// [SECTION] Edges
// ---------------------------------------------------------------------------

TEST_CASE("shared edges: a jittered mesh at 50% alpha is blended exactly once everywhere, no gaps (top-left rule)") {
    // 50% white over black: once gives 128, twice 192 (Porter-Duff over).
    const std::uint32_t half = rgba(255, 255, 255, 128);
    std::mt19937 rng(3);
    for (int trial = 0; trial < 20; ++trial) {
        const int nx = 6, ny = 5;
        const double x0 = 4.5, x1 = 59.5, y0 = 3.5, y1 = 44.5;  // borders on pixel centres: ties
        std::vector<P> pts;
        for (int j = 0; j <= ny; ++j)
            for (int i = 0; i <= nx; ++i) {
                double x = x0 + (x1 - x0) * i / nx, y = y0 + (y1 - y0) * j / ny;
                std::uniform_real_distribution<double> jit(-3.0, 3.0);
                if (i > 0 && i < nx)
                    x = rng() % 2 ? std::floor(x + jit(rng)) + 0.5 : std::round((x + jit(rng)) * 256) / 256;
                if (j > 0 && j < ny)
                    y = rng() % 2 ? std::floor(y + jit(rng)) + 0.5 : std::round((y + jit(rng)) * 256) / 256;
                pts.push_back({x, y});
            }
        Mesh m;
        std::vector<std::array<P, 3>> tris;
        auto add = [&](P a, P b, P c) {
            if (rng() % 2) std::swap(b, c);  // both windings
            m.tri(vert(a.x, a.y, half), vert(b.x, b.y, half), vert(c.x, c.y, half));
            tris.push_back({a, b, c});
        };
        for (int j = 0; j < ny; ++j)
            for (int i = 0; i < nx; ++i) {
                const P p00 = pts[j * (nx + 1) + i], p10 = pts[j * (nx + 1) + i + 1];
                const P p01 = pts[(j + 1) * (nx + 1) + i], p11 = pts[(j + 1) * (nx + 1) + i + 1];
                if (rng() % 2) {
                    add(p00, p10, p11);
                    add(p00, p11, p01);
                } else {
                    add(p00, p10, p01);
                    add(p10, p11, p01);
                }
            }
        PixelBuffer buf = cleared();
        draw(buf, m);
        int twice = 0, gaps = 0, stray = 0;
        for (int y = 0; y < kH; ++y)
            for (int x = 0; x < kW; ++x) {
                const bool in = x0 <= x + 0.5 && x + 0.5 < x1 && y0 <= y + 0.5 && y + 0.5 < y1;
                const unsigned r = red(buf.at(x, y));
                if (r == 192) ++twice;
                if (in && r != 128) ++gaps;
                if (!in && r != 0) ++stray;
            }
        CHECK(twice == 0);
        CHECK(gaps == 0);
        CHECK(stray == 0);
    }
}

TEST_CASE("shared edges: a fan around a centre with vertices on pixel centres, and adjacent rectangles") {
    const std::uint32_t half = rgba(255, 255, 255, 128);
    Mesh m;
    std::vector<std::array<P, 3>> tris;
    const P c{31.5, 23.5};
    const int n = 37;
    for (int i = 0; i < n; ++i) {
        const double t0 = 2 * M_PI * i / n, t1 = 2 * M_PI * (i + 1) / n;
        const P a{std::floor(c.x + 20 * std::cos(t0)) + 0.5, std::floor(c.y + 20 * std::sin(t0)) + 0.5};
        const P b{std::floor(c.x + 20 * std::cos(t1)) + 0.5, std::floor(c.y + 20 * std::sin(t1)) + 0.5};
        m.tri(vert(c.x, c.y, half), vert(a.x, a.y, half), vert(b.x, b.y, half));
        tris.push_back({c, a, b});
    }
    PixelBuffer buf = cleared();
    draw(buf, m);
    int covered = 0, wrong = 0;
    for (int y = 0; y < kH; ++y)
        for (int x = 0; x < kW; ++x) {
            int count = 0;
            for (const auto& t : tris) count += inside({x + 0.5, y + 0.5}, t[0], t[1], t[2]) ? 1 : 0;
            REQUIRE(count <= 1);  // the reference itself assigns each centre to one triangle
            covered += count;
            if (red(buf.at(x, y)) != (count == 1 ? 128u : 0u)) ++wrong;
        }
    CHECK(covered > 1000);
    CHECK(wrong == 0);

    // Rectangles side by side at fractional borders, through the span path.
    Mesh r;
    r.rect(2.3, 2.0, 10.5, 20.7, half);
    r.rect(10.5, 2.0, 17.25, 20.7, half);
    r.rect(2.3, 20.7, 17.25, 30.1, half);
    PixelBuffer rb = cleared();
    draw(rb, r);
    int bad = 0;
    for (int y = 0; y < kH; ++y)
        for (int x = 0; x < kW; ++x) {
            const bool in = 2.3 <= x + 0.5 && x + 0.5 < 17.25 && 2.0 <= y + 0.5 && y + 0.5 < 30.1;
            if (red(rb.at(x, y)) != (in ? 128u : 0u)) ++bad;
        }
    CHECK(bad == 0);
}

// ---------------------------------------------------------------------------
// [SECTION] Blending
// ---------------------------------------------------------------------------

namespace {
unsigned over(unsigned s, unsigned d, unsigned a) {  // round(s*a + d*(1-a)) with a in 0..255
    return static_cast<unsigned>(std::floor((s * static_cast<double>(a) + d * (255.0 - a)) / 255.0 + 0.5));
}
}  // namespace

TEST_CASE("alpha blending: out = src*a + dst*(1-a) per channel, stored alpha a + dst.a*(1-a) (Porter-Duff over)") {
    std::mt19937 rng(5);
    int checked = 0;
    for (unsigned a = 0; a <= 255; ++a) {
        const std::uint32_t src = rng() & 0x00FFFFFFu;
        const std::uint32_t dst = rng();
        for (int width : {1, 3, 4, 9, 13}) {        // tails and 4-pixel groups
            for (int kind = 0; kind < 2; ++kind) {  // rect span path; triangle path
                PixelBuffer b = cleared(dst, 16, 4);
                Mesh m;
                if (kind == 0)
                    m.rect(1, 1, 1 + width, 2, src | (a << 24));
                else
                    m.tri(vert(1, 1, src | (a << 24)), vert(1 + 2 * width, 1, src | (a << 24)),
                          vert(1, 3, src | (a << 24)));
                draw(b, m);
                const std::uint32_t got = b.at(1, 1);
                for (int ch = 0; ch < 3; ++ch) CHECK(chan(got, ch) == over(chan(src, ch), chan(dst, ch), a));
                CHECK(chan(got, 3) == over(255, chan(dst, 3), a));
                CHECK(b.at(0, 1) == dst);  // outside: untouched
                ++checked;
            }
        }
    }
    CHECK(checked == 256 * 10);
}

TEST_CASE("coverage from an Alpha8 texture scales the vertex alpha, then blends (text)") {
    std::vector<std::uint8_t> texels(32);
    for (int i = 0; i < 32; ++i) texels[static_cast<std::size_t>(i)] = static_cast<std::uint8_t>((i * 37 + 11) % 256);
    texels[5] = 0;
    texels[6] = 255;
    const Texture tex{texels.data(), 32, 1, TextureFormat::alpha8};
    for (unsigned ca : {255u, 200u, 77u}) {
        const std::uint32_t col = rgba(250, 120, 30, ca), dst = rgba(10, 60, 200, 255);
        PixelBuffer b = cleared(dst, 40, 3);
        Mesh m;
        m.rect(3, 1, 35, 2, col, ImVec2(0, 0), ImVec2(1, 1));  // 1:1: pixel x -> texel x - 3
        draw(b, m, kNoClip, &tex);
        for (int x = 3; x < 35; ++x) {
            const unsigned cov = texels[static_cast<std::size_t>(x - 3)];
            const unsigned a = static_cast<unsigned>(std::floor(cov * static_cast<double>(ca) / 255.0 + 0.5));
            const std::uint32_t got = b.at(x, 1);
            CHECK(chan(got, 0) == over(250, 10, a));
            CHECK(chan(got, 1) == over(120, 60, a));
            CHECK(chan(got, 2) == over(30, 200, a));
        }
    }
}

TEST_CASE("vertex colours interpolate linearly over a triangle (barycentric, within 1/255)") {
    const P a{3.0, 2.0}, b{60.0, 9.5}, c{12.25, 45.0};
    const std::uint32_t ca = rgba(255, 0, 0), cb = rgba(0, 255, 40), cc = rgba(20, 30, 255);
    Mesh m;
    m.tri(vert(a.x, a.y, ca), vert(b.x, b.y, cb), vert(c.x, c.y, cc));
    PixelBuffer buf = cleared();
    draw(buf, m);
    int checked = 0, worst = 0;
    const double area = cross(a, b, c);
    for (int y = 0; y < kH; ++y)
        for (int x = 0; x < kW; ++x) {
            const P p{x + 0.5, y + 0.5};
            if (!inside(p, a, b, c)) continue;
            const double la = cross(b, c, p) / area, lb = cross(c, a, p) / area, lc = cross(a, b, p) / area;
            for (int ch = 0; ch < 3; ++ch) {
                const double want = la * chan(ca, ch) + lb * chan(cb, ch) + lc * chan(cc, ch);
                worst = std::max(worst, static_cast<int>(std::ceil(std::fabs(chan(buf.at(x, y), ch) - want) - 0.5)));
            }
            ++checked;
        }
    CHECK(checked > 900);
    CHECK(worst <= 1);
}

TEST_CASE("anti-aliased fringe: alpha interpolated with one RGB blends as the formula says") {
    // ImGui's fringes: the inner vertices opaque, the outer ones alpha 0.
    const std::uint32_t solid = rgba(240, 200, 40, 255), clear = rgba(240, 200, 40, 0), dst = rgba(20, 20, 20, 255);
    Mesh m;
    m.tri(vert(2, 2, solid), vert(2, 40, solid), vert(50, 2, clear));
    PixelBuffer buf = cleared(dst);
    draw(buf, m);
    const P a{2, 2}, b{2, 40}, c{50, 2};
    const double area = cross(a, b, c);
    int checked = 0, worst = 0;
    for (int y = 0; y < kH; ++y)
        for (int x = 0; x < kW; ++x) {
            const P p{x + 0.5, y + 0.5};
            if (!inside(p, a, b, c)) continue;
            const double alpha = 255.0 * (cross(b, c, p) + cross(c, a, p)) / area;  // weights of a and b
            const double want = (240.0 * alpha + 20.0 * (255.0 - alpha)) / 255.0;
            worst = std::max(worst, static_cast<int>(std::ceil(std::fabs(chan(buf.at(x, y), 0) - want) - 0.5)));
            ++checked;
        }
    CHECK(checked > 500);
    CHECK(worst <= 1);
}

// ---------------------------------------------------------------------------
// [SECTION] Clipping
// ---------------------------------------------------------------------------

TEST_CASE("clip rectangles keep exactly the pixels whose centres lie inside the clip rect") {
    Mesh m;
    m.tri(vert(-10, -5, kWhite), vert(70, 10, kWhite), vert(20, 60, kWhite));
    m.rect(5.5, 30.25, 63.0, 47.0, rgba(255, 0, 0));
    PixelBuffer full = cleared();
    draw(full, m);
    const ImVec4 clips[] = {
        {10.25f, 5.5f, 40.75f, 30.0f}, {-20, -20, 200, 200}, {30, 0, 30, 48}, {0.5f, 40.5f, 63.5f, 47.5f}};
    for (const ImVec4& clip : clips) {
        for (bool fast : {true, false}) {
            PixelBuffer b = cleared();
            draw(b, m, clip, nullptr, fast);
            int wrong = 0;
            for (int y = 0; y < kH; ++y)
                for (int x = 0; x < kW; ++x) {
                    const bool in = clip.x <= x + 0.5 && x + 0.5 < clip.z && clip.y <= y + 0.5 && y + 0.5 < clip.w;
                    if (b.at(x, y) != (in ? full.at(x, y) : kBlack)) ++wrong;
                }
            CHECK(wrong == 0);
        }
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Texture
// ---------------------------------------------------------------------------

TEST_CASE("nearest texture sampling takes the texel containing the sample point, floor(u*w) (GL_NEAREST)") {
    // A 5x3 RGBA texture of distinct texels, stretched over a rectangle
    // (span path) and over a rotated triangle (edge path).
    std::vector<std::uint32_t> texels(15);
    for (int i = 0; i < 15; ++i)
        texels[static_cast<std::size_t>(i)] =
            rgba(static_cast<unsigned>(i * 17), static_cast<unsigned>(255 - i * 13), static_cast<unsigned>(i * 5), 255);
    const Texture tex{texels.data(), 5, 3, TextureFormat::rgba32};
    auto expect_at = [&](double u, double v) {
        const int tx = std::clamp(static_cast<int>(std::floor(u * 5)), 0, 4),
                  ty = std::clamp(static_cast<int>(std::floor(v * 3)), 0, 2);
        return texels[static_cast<std::size_t>(ty * 5 + tx)];
    };
    {
        Mesh m;
        m.rect(4, 6, 54, 42, kWhite, ImVec2(0, 0), ImVec2(1, 1));
        for (bool fast : {true, false}) {
            PixelBuffer b = cleared();
            draw(b, m, kNoClip, &tex, fast);
            int wrong = 0;
            for (int y = 6; y < 42; ++y)
                for (int x = 4; x < 54; ++x)
                    if (b.at(x, y) != expect_at((x + 0.5 - 4) / 50.0, (y + 0.5 - 6) / 36.0)) ++wrong;
            CHECK(wrong == 0);
        }
    }
    {
        const P a{5.0, 3.0}, b{60.0, 14.0}, c{16.0, 45.0};
        const ImVec2 ua(0.02f, 0.1f), ub(0.97f, 0.3f), uc(0.4f, 0.95f);
        Mesh m;
        m.tri(vert(a.x, a.y, kWhite, ua.x, ua.y), vert(b.x, b.y, kWhite, ub.x, ub.y),
              vert(c.x, c.y, kWhite, uc.x, uc.y));
        PixelBuffer buf = cleared();
        draw(buf, m, kNoClip, &tex);
        const double area = cross(a, b, c);
        int checked = 0, wrong = 0;
        for (int y = 0; y < kH; ++y)
            for (int x = 0; x < kW; ++x) {
                const P p{x + 0.5, y + 0.5};
                if (!inside(p, a, b, c)) continue;
                const double la = cross(b, c, p) / area, lb = cross(c, a, p) / area, lc = cross(a, b, p) / area;
                const double u = la * ua.x + lb * ub.x + lc * uc.x, v = la * ua.y + lb * ub.y + lc * uc.y;
                // Skip centres within float rounding of a texel boundary.
                const double fu = u * 5 - std::floor(u * 5 + 0.5), fv = v * 3 - std::floor(v * 3 + 0.5);
                if (std::fabs(fu) < 1e-4 || std::fabs(fv) < 1e-4) continue;
                ++checked;
                if (buf.at(x, y) != expect_at(u, v)) ++wrong;
            }
        CHECK(checked > 900);
        CHECK(wrong == 0);
    }
}

TEST_CASE("font atlas: a glyph's texels appear 1:1 at its place in the frame (ImFontGlyph U0/V0, X0/Y0)") {
    const HostConfig hc = host_config(200, 80);
    ImGuiHost host(hc);
    REQUIRE(host.atlas().format == TextureFormat::alpha8);
    ImFont* font = host.font(FontFace::body);
    REQUIRE(font != nullptr);
    const char* text = "Hg7";
    const ImVec2 pos(20.0f, 10.0f);
    Rasterizer raster;
    PixelBuffer buf;
    render_offscreen(
        host, raster, buf, 1.0f / 60.0f,
        [&] { ImGui::GetForegroundDrawList()->AddText(font, font->FontSize, pos, kWhite, text); }, kBlack);
    const Texture& atlas = host.atlas();
    const auto* texels = static_cast<const std::uint8_t*>(atlas.texels);
    float pen = pos.x;
    int glyph_pixels = 0, lit = 0, wrong = 0;
    std::vector<bool> in_glyph(200 * 80, false);
    for (const char* ch = text; *ch != 0; ++ch) {
        const ImFontGlyph* g = font->FindGlyph(static_cast<ImWchar>(*ch));
        REQUIRE(g != nullptr);
        // 1:1 glyphs: whole-pixel offsets and advances (PixelSnapH, no oversampling).
        CHECK(g->X0 == std::floor(g->X0));
        CHECK(g->Y0 == std::floor(g->Y0));
        CHECK(g->AdvanceX == std::floor(g->AdvanceX));
        const int tx0 = static_cast<int>(std::lround(g->U0 * atlas.width_px)),
                  ty0 = static_cast<int>(std::lround(g->V0 * atlas.height_px));
        const int gw = static_cast<int>(g->X1 - g->X0), gh = static_cast<int>(g->Y1 - g->Y0);
        CHECK(std::lround(g->U1 * atlas.width_px) - tx0 == gw);
        for (int j = 0; j < gh; ++j)
            for (int i = 0; i < gw; ++i) {
                const int x = static_cast<int>(pen + g->X0) + i, y = static_cast<int>(pos.y + g->Y0) + j;
                const unsigned cov =
                    texels[static_cast<std::size_t>(ty0 + j) * static_cast<std::size_t>(atlas.width_px) +
                           static_cast<std::size_t>(tx0 + i)];
                const std::uint32_t px = buf.at(x, y);
                in_glyph[static_cast<std::size_t>(y * 200 + x)] = true;
                // White at coverage c over black: c (straight alpha).
                if (red(px) != cov || chan(px, 1) != cov || chan(px, 2) != cov) ++wrong;
                ++glyph_pixels;
                if (cov > 0) ++lit;
            }
        pen += g->AdvanceX;
    }
    CHECK(glyph_pixels > 200);
    CHECK(lit > 60);
    CHECK(wrong == 0);
    int outside = 0;
    for (int y = 0; y < 80; ++y)
        for (int x = 0; x < 200; ++x)
            if (!in_glyph[static_cast<std::size_t>(y * 200 + x)] && buf.at(x, y) != kBlack) ++outside;
    CHECK(outside == 0);
}

TEST_CASE("the span path and the edge-function path render a whole busy screen identically") {
    const HostConfig hc = host_config(640, 400);
    ImGuiHost host(hc);
    testing::DemoScreen demo(600);
    RasterConfig slow_cfg;
    slow_cfg.rect_fast_path = false;
    Rasterizer fast, slow(slow_cfg);
    PixelBuffer a, b;
    for (int f = 0; f < 2; ++f) {
        ImDrawData& data = demo_frame(host, demo, 3.0f);
        a.resize(hc.width_px, hc.height_px);
        b.resize(hc.width_px, hc.height_px);
        a.clear(kBlack);
        b.clear(kBlack);
        fast.reset_stats();
        fast.draw(data, a);
        slow.draw(data, b);
    }
    CHECK(fast.stats().rects > 100);
    long differ = 0, not_black = 0;
    for (std::size_t i = 0; i < a.pixels.size(); ++i) {
        if (a.pixels[i] != b.pixels[i]) ++differ;
        if (a.pixels[i] != kBlack) ++not_black;
    }
    CHECK(not_black > 100000);
    CHECK(differ == 0);
}

namespace {
int g_callbacks = 0;
void count_callback(const ImDrawList*, const ImDrawCmd*) { ++g_callbacks; }
}  // namespace

TEST_CASE("ImDrawData: DisplayPos and FramebufferScale map to pixels; VtxOffset beyond 64K vertices; callbacks run") {
    const HostConfig hc = host_config(256, 256);
    ImGuiHost host(hc);
    host.new_frame(1.0f / 60.0f, 256, 256);
    ImDrawList list(ImGui::GetDrawListSharedData());
    list._ResetForNewFrame();
    list.Flags = ImDrawListFlags_AllowVtxOffset;
    list.PushClipRect(ImVec2(100, 50), ImVec2(228, 178));
    list.PushTextureID(ImGui::GetIO().Fonts->TexID);
    // 20000 one-pixel rectangles (80000 vertices: more than 16-bit indices
    // reach, so ImGui starts new commands with a VtxOffset), then a marker.
    for (int i = 0; i < 20000; ++i) {
        const float x = 100.0f + static_cast<float>(i % 100) * 0.5f, y = 50.0f + static_cast<float>(i / 100) * 0.25f;
        list.AddRectFilled(ImVec2(x, y), ImVec2(x + 0.5f, y + 0.25f), rgba(0, 0, 255));
    }
    list.AddRectFilled(ImVec2(200, 150), ImVec2(210, 160), rgba(255, 0, 0));
    list.AddCallback(count_callback, nullptr);
    list.AddCallback(ImDrawCallback_ResetRenderState, nullptr);  // must be skipped, not called
    bool offset_used = false;
    for (const ImDrawCmd& c : list.CmdBuffer) offset_used = offset_used || c.VtxOffset > 0;
    CHECK(offset_used);
    CHECK(list.VtxBuffer.Size > 65536);

    ImDrawList* lists[] = {&list};
    ImDrawData data;
    data.Valid = true;
    data.CmdLists = lists;
    data.CmdListsCount = 1;
    data.TotalVtxCount = list.VtxBuffer.Size;
    data.TotalIdxCount = list.IdxBuffer.Size;
    data.DisplayPos = ImVec2(100, 50);
    data.DisplaySize = ImVec2(128, 128);
    data.FramebufferScale = ImVec2(2, 2);
    PixelBuffer buf = cleared(kBlack, 256, 256);
    g_callbacks = 0;
    Rasterizer r;
    r.draw(data, buf);
    CHECK(g_callbacks == 1);
    // The marker at (200..210, 150..160) lands at ((x - 100) * 2, (y - 50) * 2).
    int red_px = 0, blue_px = 0;
    for (int y = 0; y < 256; ++y)
        for (int x = 0; x < 256; ++x) {
            const bool in_marker = x >= 200 && x < 220 && y >= 200 && y < 220;
            const bool in_grid = x < 100 && y < 100;  // 100 x 200 rects of 0.5 x 0.25 units, 1 x 0.5 pixels
            if (buf.at(x, y) == rgba(255, 0, 0)) ++red_px;
            if (buf.at(x, y) == rgba(0, 0, 255)) ++blue_px;
            if (in_marker)
                CHECK(buf.at(x, y) == rgba(255, 0, 0));
            else if (in_grid)
                CHECK(buf.at(x, y) == rgba(0, 0, 255));
            else
                CHECK(buf.at(x, y) == kBlack);
        }
    CHECK(red_px == 400);
    CHECK(blue_px == 100 * 100);
    host.render();
}

// ---------------------------------------------------------------------------
// [SECTION] Robustness
// ---------------------------------------------------------------------------

TEST_CASE("bad geometry draws nothing and is counted: NaN, bad indices, no area, a partial triangle") {
    Mesh m;
    m.tri(vert(NAN, 3, kWhite), vert(20, 3, kWhite), vert(10, 20, kWhite));
    m.tri(vert(1, 1, kWhite), vert(20, 20, kWhite), vert(40, 40, kWhite));  // collinear
    m.tri(vert(5, 5, kWhite), vert(5, 5, kWhite), vert(30, 9, kWhite));     // repeated vertex
    m.idx.push_back(0);
    m.idx.push_back(1);
    m.idx.push_back(999);  // beyond the vertices
    m.idx.push_back(1);    // an incomplete triangle at the end
    PixelBuffer b = cleared();
    Rasterizer r;
    r.draw_triangles(b, m.vtx, m.idx, kNoClip, nullptr);
    CHECK(r.stats().skipped == 4);
    CHECK(r.stats().triangles == 0);
    CHECK(std::all_of(b.pixels.begin(), b.pixels.end(), [](std::uint32_t p) { return p == kBlack; }));
    // Huge coordinates are clamped, not overflowed: the triangle still covers the buffer.
    Mesh big;
    big.tri(vert(-1e9, -1e9), vert(1e9, -1e9), vert(0, 1e9));
    r.draw_triangles(b, big.vtx, big.idx, kNoClip, nullptr);
    CHECK(std::all_of(b.pixels.begin(), b.pixels.end(), [](std::uint32_t p) { return p == kWhite; }));
}

TEST_CASE("a frame allocates nothing once the buffer is sized; shrinking keeps the allocation") {
    const HostConfig hc = host_config(640, 400);
    ImGuiHost host(hc);
    testing::DemoScreen demo(600);
    Rasterizer raster;
    PixelBuffer buf;
    buf.resize(hc.width_px, hc.height_px);
    long during_draw = -1;
    for (int f = 0; f < 3; ++f) {
        ImDrawData& data = demo_frame(host, demo, 1.0f + 0.1f * static_cast<float>(f));
        g_allocs = 0;
        g_count_allocs = true;
        buf.clear(kBlack);
        raster.draw(data, buf);
        g_count_allocs = false;
        during_draw = g_allocs.load();
    }
    CHECK(during_draw == 0);
    const std::uint32_t* before = buf.pixels.data();
    buf.resize(320, 200);
    CHECK(buf.pixels.data() == before);
    buf.resize(640, 400);
    CHECK(buf.pixels.data() == before);
}

// ---------------------------------------------------------------------------
// [SECTION] Png
// ---------------------------------------------------------------------------

TEST_CASE("PNG round trip: our writer, read back by stb_image, gives the same RGBA pixels") {
    PixelBuffer b;
    b.resize(37, 23);  // odd sizes: no row padding assumptions
    std::mt19937 rng(9);
    for (auto& p : b.pixels) p = rng();
    char path[] = "/tmp/beatless-png-XXXXXX";
    const int fd = mkstemp(path);
    REQUIRE(fd >= 0);
    close(fd);
    write_png(path, b);
    int w = 0, h = 0, comp = 0;
    unsigned char* data = stbi_load(path, &w, &h, &comp, 4);
    REQUIRE(data != nullptr);
    CHECK(w == 37);
    CHECK(h == 23);
    CHECK(comp == 4);
    long differ = 0;
    for (std::size_t i = 0; i < b.pixels.size(); ++i) {
        const std::uint32_t p = b.pixels[i];
        for (int ch = 0; ch < 4; ++ch)
            if (data[i * 4 + static_cast<std::size_t>(ch)] != chan(p, ch)) ++differ;
    }
    CHECK(differ == 0);
    stbi_image_free(data);
    std::remove(path);
}

TEST_CASE("PNG errors name the file and the reason") {
    PixelBuffer b;
    b.resize(2, 2);
    b.clear(kWhite);
    std::string msg;
    try {
        write_png("/nonexistent-beatless-dir/out.png", b);
    } catch (const RenderError& e) {
        msg = e.what();
    }
    CHECK(msg == "/nonexistent-beatless-dir/out.png: cannot be written (No such file or directory)");
    PixelBuffer empty;
    msg.clear();
    try {
        write_png("/tmp/empty.png", empty);
    } catch (const RenderError& e) {
        msg = e.what();
    }
    CHECK(msg == "/tmp/empty.png: cannot be written (the image is empty)");
}

// ---------------------------------------------------------------------------
// [SECTION] Host
// ---------------------------------------------------------------------------

TEST_CASE("host: DejaVu faces at the configured sizes times the DPI scale; frames take the given time step") {
    ImGuiHost host(host_config(320, 200, 1.5f));
    CHECK(host.fonts_from_files());
    CHECK(host.font(FontFace::body)->FontSize == doctest::Approx(std::round(22.0f * 1.5f)));
    CHECK(host.font(FontFace::large)->FontSize == doctest::Approx(std::round(64.0f * 1.5f)));
    CHECK(host.font(FontFace::mono) != host.font(FontFace::body));
    // The mono face really is monospaced: '1' and 'W' advance alike.
    CHECK(host.font(FontFace::mono)->FindGlyph('1')->AdvanceX == host.font(FontFace::mono)->FindGlyph('W')->AdvanceX);
    CHECK(host.font(FontFace::body)->FindGlyph('1')->AdvanceX != host.font(FontFace::body)->FindGlyph('W')->AdvanceX);
    // Flat, natural, sharp and the cent sign are in the atlas.
    for (ImWchar c : {ImWchar(0x266D), ImWchar(0x266E), ImWchar(0x266F), ImWchar(0x00A2), ImWchar(0x2212)})
        CHECK(host.font(FontFace::body)->FindGlyphNoFallback(c) != nullptr);
    host.new_frame(0.125f, 320, 200);
    CHECK(ImGui::GetIO().DeltaTime == 0.125f);
    CHECK(ImGui::GetIO().DisplaySize.x == 320.0f);
    CHECK(ImGuiHost::current() == &host);
    ImGui::Text("x");
    ImDrawData& d = host.render();
    CHECK(d.DisplaySize.x == 320.0f);
    CHECK(d.TotalVtxCount > 0);
    CHECK(ImGui::GetIO().IniFilename == nullptr);  // no imgui.ini written
}

TEST_CASE("host: a display smaller than the screens are laid out for shrinks the text to fit, in steps of 1/20") {
    // Laid out for 1180x700 at scale 1; the factor is min(1, w/1180, h/700)
    // rounded down to a twentieth, never below 0.6 (arithmetic).
    auto fitted = [](int w, int h, float dpi) {
        HostConfig hc = host_config(w, h, dpi);
        hc.fit_width_px = 1180;
        hc.fit_height_px = 700;
        return hc;
    };
    {
        ImGuiHost host(fitted(1280, 800, 1.0f));
        CHECK(host.fit_scale() == 1.0f);
        CHECK(host.font(FontFace::body)->FontSize == doctest::Approx(22.0f));
        // The window shrinks to 960x600: min(0.814, 0.857) -> 0.8; the atlas is rebuilt before that frame.
        host.new_frame(1.0f / 60.0f, 960, 600);
        host.render();
        CHECK(host.fit_scale() == doctest::Approx(0.8f));
        CHECK(host.font(FontFace::body)->FontSize == doctest::Approx(std::round(22.0f * 0.8f)));
        CHECK(host.font(FontFace::large)->FontSize == doctest::Approx(std::round(64.0f * 0.8f)));
        // And grows back.
        host.new_frame(1.0f / 60.0f, 1920, 1080);
        host.render();
        CHECK(host.fit_scale() == 1.0f);
        CHECK(host.font(FontFace::body)->FontSize == doctest::Approx(22.0f));
    }
    CHECK(ImGuiHost(fitted(2560, 1600, 2.0f)).fit_scale() == 1.0f);  // a high-density screen: 1280x800 at scale 2
    CHECK(ImGuiHost(fitted(1366, 650, 1.0f)).fit_scale() == doctest::Approx(0.9f));  // 650/700 = 0.929
    CHECK(ImGuiHost(fitted(320, 200, 1.0f)).fit_scale() == doctest::Approx(0.6f));   // the floor
    CHECK(ImGuiHost(host_config(320, 200, 1.0f)).fit_scale() == 1.0f);               // turned off
}

TEST_CASE("host: a missing font directory falls back to the built-in font with one warning line") {
    char path[] = "/tmp/beatless-stderr-XXXXXX";
    const int fd = mkstemp(path);
    REQUIRE(fd >= 0);
    std::fflush(stderr);
    const int saved = dup(2);
    dup2(fd, 2);
    bool from_files = true;
    float size = 0.0f;
    {
        HostConfig hc;
        hc.font_dir = "/nonexistent-fonts";
        ImGuiHost host(hc);
        from_files = host.fonts_from_files();
        size = host.font(FontFace::body)->FontSize;
    }
    std::fflush(stderr);
    dup2(saved, 2);
    close(saved);
    std::string text;
    if (std::FILE* f = std::fopen(path, "r")) {
        char line[512];
        while (std::fgets(line, sizeof line, f) != nullptr) text += line;
        std::fclose(f);
    }
    close(fd);
    std::remove(path);
    CHECK_FALSE(from_files);
    CHECK(size == 22.0f);
    CHECK(std::count(text.begin(), text.end(), '\n') == 1);
    CHECK(text.find("/nonexistent-fonts/DejaVuSans.ttf") != std::string::npos);
    CHECK(text.find("built-in font") != std::string::npos);
}

TEST_CASE("host: bad settings are refused with a message naming the value") {
    HostConfig hc;
    hc.dpi_scale = 0.0f;
    std::string msg;
    try {
        ImGuiHost host(hc);
    } catch (const RenderError& e) {
        msg = e.what();
    }
    CHECK(msg.find("DPI scale") == 0);
}
