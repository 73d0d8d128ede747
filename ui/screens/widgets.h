// DrawKit — small drawing helpers shared by the screens: text placed on
// whole pixels (so glyphs stay crisp under the nearest-texel rasterizer),
// the state shapes (▲ sharp, ▼ flat, ● in tune, ◇ centre, ■/□ on/off), and
// the tuning state of a deviation with its colour, shape and word.
#pragma once

#include "ui/render/imgui_host.h"

#include <imgui.h>

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

enum class Tuning { in_tune, sharp, flat };

Tuning tuning_of(double dev_cents, double in_tune_cents) noexcept;
std::uint32_t tuning_colour(Tuning t) noexcept;   // palette.h
std::string_view tuning_word(Tuning t) noexcept;  // "in tune", "sharp", "flat"

// The face's size in pixels as the host built it.
float font_px(FontFace face);
ImFont* font_of(FontFace face);
ImVec2 text_size(FontFace face, std::string_view text);

// Draws text with its top-left corner at pos, rounded to whole pixels.
void draw_text(ImDrawList* dl, FontFace face, ImVec2 pos, std::uint32_t colour, std::string_view text);
// The same, centred horizontally on x.
void draw_text_centred(ImDrawList* dl, FontFace face, float x, float y, std::uint32_t colour, std::string_view text);

// State shapes, centred on c with half-size r.
void draw_tuning_shape(ImDrawList* dl, Tuning t, ImVec2 c, float r, std::uint32_t colour);    // ▲ ▼ ●
void draw_diamond(ImDrawList* dl, ImVec2 c, float r, std::uint32_t colour, float thickness);  // hollow ◇
void draw_square(ImDrawList* dl, ImVec2 c, float r, std::uint32_t colour, bool filled);       // ■ or □
void draw_warning_sign(ImDrawList* dl, ImVec2 c, float r, std::uint32_t colour);              // a triangle with "!"

// A panel's background (palette::kPanel, rounded corners), top-left at (x0, y0).
void draw_panel(ImDrawList* dl, float x0, float y0, float w, float h);
// The text, cut at a character boundary with an ellipsis so it fits max_w pixels.
std::string fit_text(FontFace face, const std::string& text, float max_w);
// The words of text in lines of at most max_w pixels (a word longer than a line is cut by fit_text).
std::vector<std::string> wrap_lines(FontFace face, std::string_view text, float max_w);

// Formats with a true minus sign (U+2212) for negative values: "+12", "\u221212".
std::string signed_text(double v, int decimals);
// A verdict's readout right-aligned at `right`: the word over its unit line, the state's shape, the number
// (large at ty while live; medium at ny with "last" before it otherwise). Shared by the Practice views.
void draw_verdict_readout(ImDrawList* dl, float right, float ty, float ny, Tuning t, bool live, const std::string& word,
                          const std::string& num, const std::string& unit);

}  // namespace beatless::ui
