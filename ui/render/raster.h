// Rasterizer — draws Dear ImGui's ImDrawData into an RGBA8 pixel buffer on the CPU.
// Method: integer edge functions (J. Pineda, SIGGRAPH 1988), the Direct3D 10 top-left fill rule, straight-alpha
// "over" (Porter & Duff, SIGGRAPH 1984) with exact 8-bit rounding (J. Blinn, IEEE CG&A 1995). What it supports:
// beside Rasterizer::draw; the method in detail: DEVELOPERS.md, "Methods in detail".
// Thread: any, one call at a time per Rasterizer. Allocates: no (PixelBuffer::resize aside).
#pragma once

#include <imgui.h>

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace beatless::ui {

// Packs one RGBA8 pixel the way ImGui's IM_COL32 does: byte order R, G, B, A
// in memory on a little-endian machine.
constexpr std::uint32_t rgba(unsigned r, unsigned g, unsigned b, unsigned a = 255) {
    return (a << 24) | (b << 16) | (g << 8) | r;
}

// An RGBA8 image, rows top to bottom, no padding between rows.
struct PixelBuffer {
    int width_px = 0;
    int height_px = 0;
    std::vector<std::uint32_t> pixels;  // width_px * height_px, IM_COL32 packing

    void resize(int width_px, int height_px);  // keeps the allocation when shrinking; contents undefined after
    void clear(std::uint32_t color) noexcept;  // every pixel set to `color`
    std::uint32_t at(int x, int y) const noexcept {
        return pixels[static_cast<std::size_t>(y) * static_cast<std::size_t>(width_px) + static_cast<std::size_t>(x)];
    }
};

enum class TextureFormat {
    alpha8,  // 1 byte per texel: coverage; colour is white (ImFontAtlas::GetTexDataAsAlpha8)
    rgba32,  // 4 bytes per texel, IM_COL32 packing (ImFontAtlas::GetTexDataAsRGBA32)
};

// What an ImTextureID points at: texels owned by someone else (the font
// atlas, an image). A null ImTextureID draws untextured (white texels).
struct Texture {
    const void* texels = nullptr;  // width_px * height_px texels, rows top to bottom
    int width_px = 0;
    int height_px = 0;
    TextureFormat format = TextureFormat::alpha8;
};

struct RasterConfig {
    bool rect_fast_path = true;  // fill axis-aligned quads as spans (off only to test the general path against it)
};

struct RasterStats {
    std::size_t triangles = 0;  // drawn through the general edge-function path
    std::size_t rects = 0;      // pairs drawn through the axis-aligned span path
    std::size_t commands = 0;   // draw commands seen
    std::size_t skipped = 0;    // triangles rejected: degenerate, non-finite or bad index
};

class Rasterizer {
public:
    explicit Rasterizer(const RasterConfig& config = {}) : config_(config) {}

    // Supports: textured vertex-coloured triangles, clip rectangles, VtxOffset
    // (ImGuiBackendFlags_RendererHasVtxOffset), DisplayPos/FramebufferScale, user callbacks. Does not: filter
    // textures (nearest only; see texture sampling in raster.cpp for why that is crisp for our font atlas), wrap
    // texture coordinates (they clamp to the edge), or handle ImGui's baked anti-aliased line textures well
    // (build the atlas with NoBakedLines).
    // Draws every command list of `data` into `target`, which must already be
    // sized (usually to DisplaySize * FramebufferScale) and cleared.
    // ImTextureID must be null or point at a Texture.
    // Thread: any, one call at a time per Rasterizer. Allocates: no.
    void draw(const ImDrawData& data, PixelBuffer& target) noexcept;

    // Draws indexed triangles in pixel coordinates (no DisplayPos offset),
    // clipped to clip_rect = (x0, y0, x1, y1): a pixel is inside when its
    // centre is, with x0 <= x + 0.5 < x1. Allocates: no.
    void draw_triangles(PixelBuffer& target, std::span<const ImDrawVert> vertices, std::span<const ImDrawIdx> indices,
                        const ImVec4& clip_rect, const Texture* texture) noexcept;

    const RasterStats& stats() const noexcept { return stats_; }
    void reset_stats() noexcept { stats_ = {}; }

private:
    struct Transform {
        float offset_x = 0.0f, offset_y = 0.0f;  // subtracted first (DisplayPos)
        float scale_x = 1.0f, scale_y = 1.0f;    // then multiplied (FramebufferScale)
    };
    void draw_elements(PixelBuffer& target, std::span<const ImDrawVert> vertices, std::span<const ImDrawIdx> indices,
                       const ImVec4& clip_rect, const Texture* texture, const Transform& xf) noexcept;

    RasterConfig config_;
    RasterStats stats_;
};

}  // namespace beatless::ui
