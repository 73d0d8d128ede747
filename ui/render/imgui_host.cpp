// ImGuiHost — see imgui_host.h.
#include "ui/render/imgui_host.h"

#include "ui/render/render_error.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>

namespace beatless::ui {

namespace {

// Basic Latin and Latin-1 (with the cent sign U+00A2), general punctuation
// (dashes, ellipsis), arrows, the minus sign, and flat/natural/sharp.
constexpr ImWchar kGlyphRanges[] = {
    0x0020, 0x00FF, 0x2010, 0x2027, 0x2190, 0x2193, 0x2212, 0x2212, 0x266D, 0x266F, 0,
};

enum class FaceSize { body, medium, large };
struct FaceFile {
    FontFace face;
    const char* file;
    FaceSize size;
};
constexpr std::array<FaceFile, 5> kFaces{{
    {FontFace::body, "DejaVuSans.ttf", FaceSize::body},
    {FontFace::bold, "DejaVuSans-Bold.ttf", FaceSize::body},
    {FontFace::mono, "DejaVuSansMono.ttf", FaceSize::body},
    {FontFace::large, "DejaVuSans-Bold.ttf", FaceSize::large},
    {FontFace::medium, "DejaVuSans-Bold.ttf", FaceSize::medium},
}};

bool readable(const std::string& path) {
    std::FILE* f = std::fopen(path.c_str(), "rb");
    if (f == nullptr) return false;
    std::fclose(f);
    return true;
}

struct ContextGuard {  // restores the previously current ImGui context
    ImGuiContext* prev = ImGui::GetCurrentContext();
    ~ContextGuard() { ImGui::SetCurrentContext(prev); }
};

}  // namespace

ImGuiHost::ImGuiHost(const HostConfig& config) : config_(config) {
    if (!(config_.dpi_scale > 0.0f && config_.dpi_scale <= 8.0f))
        throw RenderError("DPI scale " + std::to_string(config_.dpi_scale) + ": must lie in (0, 8]");
    if (config_.width_px < 0 || config_.height_px < 0)
        throw RenderError("display size " + std::to_string(config_.width_px) + "x" + std::to_string(config_.height_px) +
                          ": must not be negative");

    IMGUI_CHECKVERSION();
    context_ = ImGui::CreateContext();
    ImGui::SetCurrentContext(context_);
    ImGuiIO& io = ImGui::GetIO();
    io.IniFilename = nullptr;
    io.LogFilename = nullptr;
    io.BackendRendererName = "beatless-raster";
    io.UserData = this;
    io.BackendFlags |= ImGuiBackendFlags_RendererHasVtxOffset;
    io.DisplaySize = ImVec2(static_cast<float>(config_.width_px), static_cast<float>(config_.height_px));
    io.DisplayFramebufferScale = ImVec2(1.0f, 1.0f);

    config_.font_scale = std::clamp(config_.font_scale > 0.0f ? config_.font_scale : 1.0f, 0.5f, 3.0f);
    fit_scale_ = fit_for(config_.width_px, config_.height_px);
    io.Fonts->Flags |=
        ImFontAtlasFlags_NoBakedLines;  // lines as geometry: their edges are anti-aliased by vertex alpha
    try {
        build_fonts();
    } catch (const RenderError&) {
        ImGui::DestroyContext(context_);
        context_ = nullptr;
        throw;
    }
    const float scale = config_.dpi_scale;

    ImGuiStyle& style = ImGui::GetStyle();
    ImGui::StyleColorsDark(&style);
    style.AntiAliasedLinesUseTex = false;
    style.Colors[ImGuiCol_WindowBg].w = 1.0f;  // opaque panels: nothing shows through behind text
    style.ScaleAllSizes(scale);
}

// Fills the atlas with every face at dpi_scale x font_scale (glyphs 1:1 for
// nearest sampling) and points the rasterizer's texture at it.
void ImGuiHost::build_fonts() {
    ImFontAtlas& atlas = *ImGui::GetIO().Fonts;
    atlas.Clear();
    const float scale = config_.dpi_scale * config_.font_scale * fit_scale_;
    std::string missing;
    for (const FaceFile& f : kFaces) {
        ImFontConfig cfg;
        cfg.OversampleH = 1;
        cfg.OversampleV = 1;
        cfg.PixelSnapH = true;
        const float size = f.size == FaceSize::large    ? config_.large_size_px
                           : f.size == FaceSize::medium ? config_.medium_size_px
                                                        : config_.body_size_px;
        cfg.SizePixels = std::round(size * scale);
        const std::string path = config_.font_dir + "/" + f.file;
        const bool loaded =
            readable(path) && atlas.AddFontFromFileTTF(path.c_str(), cfg.SizePixels, &cfg, kGlyphRanges) != nullptr;
        if (!loaded) {
            if (missing.empty()) missing = path;
            atlas.AddFontDefault(&cfg);
        }
    }
    fonts_from_files_ = missing.empty();
    if (!fonts_from_files_ && !font_warned_) {
        font_warned_ = true;
        std::fprintf(stderr,
                     "beatless: font %s cannot be read; using ImGui's built-in font (install fonts-dejavu-core)\n",
                     missing.c_str());
    }

    unsigned char* texels = nullptr;
    int w = 0, h = 0;
    atlas.GetTexDataAsAlpha8(&texels, &w, &h);
    if (texels == nullptr || w <= 0 || h <= 0) throw RenderError("font atlas: cannot be built");
    atlas_ = Texture{texels, w, h, TextureFormat::alpha8};
    atlas.SetTexID(static_cast<ImTextureID>(const_cast<Texture*>(&atlas_)));
}

// In steps of 1/20, so that dragging a window edge rebuilds the atlas only
// now and then.
float ImGuiHost::fit_for(int width_px, int height_px) const {
    if (config_.fit_width_px <= 0 || config_.fit_height_px <= 0 || width_px <= 0 || height_px <= 0) return 1.0f;
    const float need_w = static_cast<float>(config_.fit_width_px) * config_.dpi_scale;
    const float need_h = static_cast<float>(config_.fit_height_px) * config_.dpi_scale;
    const float f = std::min({1.0f, static_cast<float>(width_px) / need_w, static_cast<float>(height_px) / need_h});
    return std::max(0.6f, std::floor(f * 20.0f) / 20.0f);
}

void ImGuiHost::set_font_scale(float font_scale) {
    if (!(font_scale > 0.0f)) return;
    pending_font_scale_ = std::clamp(font_scale, 0.5f, 3.0f);
}

ImGuiHost::~ImGuiHost() {
    if (context_ != nullptr) ImGui::DestroyContext(context_);
}

void ImGuiHost::make_current() const { ImGui::SetCurrentContext(context_); }

ImGuiHost* ImGuiHost::current() {
    if (ImGui::GetCurrentContext() == nullptr) return nullptr;
    return static_cast<ImGuiHost*>(ImGui::GetIO().UserData);
}

void ImGuiHost::new_frame(float dt_s, int width_px, int height_px) {
    make_current();
    bool rebuild = false;
    if (pending_font_scale_ > 0.0f) {
        if (pending_font_scale_ != config_.font_scale) {
            config_.font_scale = pending_font_scale_;
            rebuild = true;
        }
        pending_font_scale_ = 0.0f;
    }
    const float fit = fit_for(width_px, height_px);
    if (fit != fit_scale_) {
        fit_scale_ = fit;
        rebuild = true;
    }
    if (rebuild) build_fonts();
    ImGuiIO& io = ImGui::GetIO();
    io.DeltaTime = std::isfinite(dt_s) ? std::clamp(dt_s, 1e-6f, 1.0f) : 1.0f / 60.0f;
    io.DisplaySize = ImVec2(static_cast<float>(std::max(width_px, 0)), static_cast<float>(std::max(height_px, 0)));
    io.DisplayFramebufferScale = ImVec2(1.0f, 1.0f);
    ImGui::NewFrame();
}

ImDrawData& ImGuiHost::render() {
    make_current();
    ImGui::Render();
    return *ImGui::GetDrawData();
}

ImFont* ImGuiHost::font(FontFace face) const {
    const ContextGuard guard;
    make_current();
    ImFontAtlas& atlas = *ImGui::GetIO().Fonts;
    const int i = static_cast<int>(face);
    return i < atlas.Fonts.Size ? atlas.Fonts[i] : atlas.Fonts[0];
}

void render_offscreen(ImGuiHost& host, Rasterizer& raster, PixelBuffer& out, float dt_s,
                      const std::function<void()>& build_frame, std::uint32_t clear_color) {
    const int w = host.config().width_px, h = host.config().height_px;
    host.new_frame(dt_s, w, h);
    if (build_frame) build_frame();
    ImDrawData& data = host.render();
    if (out.width_px != w || out.height_px != h) out.resize(w, h);
    out.clear(clear_color);
    raster.draw(data, out);
}

}  // namespace beatless::ui
