// Snapshot pixels — reading back what `beatless snapshot` wrote (test-only).
//
// PNGs are decoded with stb_image (libstb-dev, an independent decoder);
// text is rendered offscreen exactly as the screens draw it (the face at the
// host's size, on whole pixels) and searched pixel for pixel. Shared by the
// Practice and Ensemble snapshot tests.
#pragma once

#include "tests/cli.h"
#include "ui/render/imgui_host.h"
#include "ui/render/raster.h"
#include "ui/screens/palette.h"

#include <doctest/doctest.h>
#include <stb_image.h>

#include <algorithm>
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

namespace beatless::test {

// ---------------------------------------------------------------------------
// [SECTION] Images
// ---------------------------------------------------------------------------

struct Image {
    int w = 0, h = 0;
    std::vector<std::uint32_t> px;  // IM_COL32 packing, like ui/render/raster.h
    std::uint32_t at(int x, int y) const {
        return px[static_cast<std::size_t>(y) * static_cast<std::size_t>(w) + static_cast<std::size_t>(x)];
    }
};

inline Image read_png(const std::string& path) {
    Image img;
    int n = 0;
    unsigned char* data = stbi_load(path.c_str(), &img.w, &img.h, &n, 4);
    REQUIRE_MESSAGE(data != nullptr, path << ": " << stbi_failure_reason());
    img.px.resize(static_cast<std::size_t>(img.w) * static_cast<std::size_t>(img.h));
    for (std::size_t i = 0; i < img.px.size(); ++i)
        img.px[i] = ui::rgba(data[4 * i], data[4 * i + 1], data[4 * i + 2], data[4 * i + 3]);
    stbi_image_free(data);
    return img;
}

struct Box {
    int x0 = 1 << 30, y0 = 1 << 30, x1 = -1, y1 = -1;  // inclusive
    bool empty() const { return x1 < x0; }
    void add(int x, int y) {
        x0 = std::min(x0, x);
        y0 = std::min(y0, y);
        x1 = std::max(x1, x);
        y1 = std::max(y1, y);
    }
};

// The full-width band of rows y0 .. y1 (inclusive) of an image.
inline Box rows(const Image& img, int y0, int y1) {
    Box b;
    b.x0 = 0;
    b.x1 = img.w - 1;
    b.y0 = y0;
    b.y1 = y1;
    return b;
}

inline Box find_colour(const Image& img, std::uint32_t colour, int y_from = 0, int y_to = -1) {
    Box b;
    if (y_to < 0) y_to = img.h;
    for (int y = y_from; y < y_to; ++y)
        for (int x = 0; x < img.w; ++x)
            if (img.at(x, y) == colour) b.add(x, y);
    return b;
}

// Text rendered offscreen exactly as the screens draw it: the face at the
// host's size, whole-pixel position, on a given background. Returns the
// tight box of pixels that differ from the background.
inline Image render_text(const std::string& text, ui::FontFace face, std::uint32_t colour, std::uint32_t background,
                         float dpi_scale) {
    ui::HostConfig hc;
    hc.width_px = 1600;
    hc.height_px = 300;
    hc.dpi_scale = dpi_scale;
    hc.fit_width_px = 0;  // the face at exactly dpi_scale times its size
    ui::ImGuiHost host(hc);
    ui::Rasterizer raster;
    ui::PixelBuffer buf;
    ui::render_offscreen(
        host, raster, buf, 1.0f / 60.0f,
        [&] {
            ImFont* f = host.font(face);
            ImGui::GetBackgroundDrawList()->AddText(f, f->FontSize, ImVec2(20, 20), colour, text.c_str());
        },
        background);
    Box b;
    for (int y = 0; y < buf.height_px; ++y)
        for (int x = 0; x < buf.width_px; ++x)
            if (buf.at(x, y) != background) b.add(x, y);
    REQUIRE(!b.empty());
    Image t;
    t.w = b.x1 - b.x0 + 1;
    t.h = b.y1 - b.y0 + 1;
    for (int y = b.y0; y <= b.y1; ++y)
        for (int x = b.x0; x <= b.x1; ++x) t.px.push_back(buf.at(x, y));
    return t;
}

// Every top-left position inside `region` where `tpl` matches pixel for pixel.
inline std::vector<std::pair<int, int>> find_exact(const Image& img, const Image& tpl, const Box& region) {
    std::vector<std::pair<int, int>> hits;
    for (int y = std::max(0, region.y0); y + tpl.h <= std::min(img.h, region.y1 + 1); ++y)
        for (int x = std::max(0, region.x0); x + tpl.w <= std::min(img.w, region.x1 + 1); ++x) {
            bool ok = true;
            for (int ty = 0; ty < tpl.h && ok; ++ty)
                for (int tx = 0; tx < tpl.w; ++tx)
                    if (img.at(x + tx, y + ty) != tpl.at(tx, ty)) {
                        ok = false;
                        break;
                    }
            if (ok) hits.emplace_back(x, y);
        }
    return hits;
}

// The whole image as a search region.
inline Box whole(const Image& img) {
    Box b;
    b.add(0, 0);
    b.add(img.w - 1, img.h - 1);
    return b;
}

inline std::string snapshot(const TempDir& home, const std::string& args, const std::string& name) {
    const std::string out = home.file(name);
    const auto r = run_program("snapshot " + args + " --out " + out, {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    CHECK(r.out.find(out) != std::string::npos);
    return out;
}

}  // namespace beatless::test
