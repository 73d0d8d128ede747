// ImGuiHost — a Dear ImGui context of its own for offscreen rendering: fonts, atlas, frames. Writes no imgui.ini.
// Method: DejaVu faces from Debian's fonts-dejavu-core (ImGui's built-in font, with one warning line, when missing),
// an Alpha8 atlas built once with 1:1 glyphs; a DPI scale enlarges fonts and style. Detail: DEVELOPERS.md.
// Thread: the UI thread. Allocates: yes (never on an audio path).
#pragma once

#include "ui/render/raster.h"

#include <imgui.h>

#include <functional>
#include <string>

namespace beatless::ui {

struct HostConfig {
    int width_px = 1280;  // display size in pixels
    int height_px = 800;
    float dpi_scale = 1.0f;  // 1 = a 96-dpi screen; multiplies every size below and the style
    float body_size_px =
        22.0f;  // body text em height at scale 1 (about 6 mm at 96 dpi: readable at ~1 m, common practice)
    float medium_size_px = 34.0f;  // headings and mid-size readouts (target name, beat rate) at scale 1
    float large_size_px = 64.0f;   // big readouts (the deviation in cents) at scale 1
    float font_scale = 1.0f;       // the user's font size choice (0.5 .. 3), on top of dpi_scale; fonts only
    // The smallest display the screens are laid out for at scale 1 (the
    // Practice screen's control row needs about 1150 px). A smaller display
    // shrinks the text, and with it every size measured in ui_unit(), so
    // nothing is cut off; never below 0.6. 0 turns this off.
    int fit_width_px = 1180;
    int fit_height_px = 700;
    std::string font_dir = "/usr/share/fonts/truetype/dejavu";  // fonts-dejavu-core
};

// Faces loaded by the host, in this order in the atlas.
enum class FontFace {
    body,    // DejaVuSans, body_size_px (the default font)
    bold,    // DejaVuSans-Bold, body_size_px
    mono,    // DejaVuSansMono, body_size_px (aligned figures)
    large,   // DejaVuSans-Bold, large_size_px
    medium,  // DejaVuSans-Bold, medium_size_px
};

class ImGuiHost {
public:
    explicit ImGuiHost(const HostConfig& config = {});  // creates the context, loads fonts, builds the atlas
    ~ImGuiHost();
    ImGuiHost(const ImGuiHost&) = delete;
    ImGuiHost& operator=(const ImGuiHost&) = delete;

    // Makes this host's context current, sets io.DeltaTime (dt_s, clamped
    // to 1e-6 .. 1 s) and io.DisplaySize, and calls ImGui::NewFrame().
    void new_frame(float dt_s, int width_px, int height_px);
    // Ends the frame (ImGui::Render). Valid until the next new_frame().
    ImDrawData& render();

    ImFont* font(FontFace face) const;                           // valid for the host's lifetime
    const Texture& atlas() const { return atlas_; }              // the font atlas as the rasterizer sees it
    bool fonts_from_files() const { return fonts_from_files_; }  // false when the built-in font stands in
    ImGuiContext* context() const { return context_; }
    const HostConfig& config() const { return config_; }
    void make_current() const;
    // Asks for fonts at a new font_scale; the atlas is rebuilt at the start
    // of the next new_frame() (never inside a frame). Values outside 0.5 .. 3
    // are clamped.
    void set_font_scale(float font_scale);

    // The factor (0.6 .. 1) the text is shrunk by to fit the display.
    float fit_scale() const { return fit_scale_; }

    // The host whose context is current (kept in io.UserData), or null: how
    // code building a frame inside run_window() finds fonts and scale.
    static ImGuiHost* current();

private:
    HostConfig config_;
    ImGuiContext* context_ = nullptr;
    void build_fonts();
    Texture atlas_;
    bool fonts_from_files_ = false;
    bool font_warned_ = false;
    float pending_font_scale_ = 0.0f;  // > 0: rebuild the atlas before the next frame
    float fit_scale_ = 1.0f;           // applied to the fonts
    float fit_for(int width_px, int height_px) const;
};

// One whole offscreen frame: new_frame, build_frame(), render, clear `out`
// to clear_color at the host's display size, and rasterize into it.
void render_offscreen(ImGuiHost& host, Rasterizer& raster, PixelBuffer& out, float dt_s,
                      const std::function<void()>& build_frame, std::uint32_t clear_color = rgba(24, 26, 30));

}  // namespace beatless::ui
