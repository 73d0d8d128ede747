// DrawKit — see draw_kit.h.
#include "ui/screens/widgets.h"

#include "pitch/base/text.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

namespace beatless::ui {

Tuning tuning_of(double dev_cents, double in_tune_cents) noexcept {
    if (std::fabs(dev_cents) <= in_tune_cents) return Tuning::in_tune;
    return dev_cents > 0.0 ? Tuning::sharp : Tuning::flat;
}

std::uint32_t tuning_colour(Tuning t) noexcept {
    switch (t) {
        case Tuning::in_tune: return palette::kInTune;
        case Tuning::sharp: return palette::kSharp;
        case Tuning::flat: return palette::kFlat;
    }
    return palette::kText;
}

std::string_view tuning_word(Tuning t) noexcept {
    switch (t) {
        case Tuning::in_tune: return "in tune";
        case Tuning::sharp: return "sharp";
        case Tuning::flat: return "flat";
    }
    return "";
}

ImFont* font_of(FontFace face) { return ImGuiHost::current()->font(face); }
float font_px(FontFace face) { return font_of(face)->FontSize; }

ImVec2 text_size(FontFace face, std::string_view text) {
    ImFont* f = font_of(face);
    return f->CalcTextSizeA(f->FontSize, 1e9f, 0.0f, text.data(), text.data() + text.size());
}

void draw_text(ImDrawList* dl, FontFace face, ImVec2 pos, std::uint32_t colour, std::string_view text) {
    ImFont* f = font_of(face);
    dl->AddText(f, f->FontSize, ImVec2(std::round(pos.x), std::round(pos.y)), colour, text.data(),
                text.data() + text.size());
}

void draw_text_centred(ImDrawList* dl, FontFace face, float x, float y, std::uint32_t colour, std::string_view text) {
    draw_text(dl, face, ImVec2(x - 0.5f * text_size(face, text).x, y), colour, text);
}

void draw_tuning_shape(ImDrawList* dl, Tuning t, ImVec2 c, float r, std::uint32_t colour) {
    switch (t) {
        case Tuning::in_tune: dl->AddCircleFilled(c, r * 0.85f, colour, 24); break;
        case Tuning::sharp:
            dl->AddTriangleFilled(ImVec2(c.x, c.y - r), ImVec2(c.x + r, c.y + r * 0.8f),
                                  ImVec2(c.x - r, c.y + r * 0.8f), colour);
            break;
        case Tuning::flat:
            dl->AddTriangleFilled(ImVec2(c.x - r, c.y - r * 0.8f), ImVec2(c.x + r, c.y - r * 0.8f),
                                  ImVec2(c.x, c.y + r), colour);
            break;
    }
}

void draw_diamond(ImDrawList* dl, ImVec2 c, float r, std::uint32_t colour, float thickness) {
    const ImVec2 p[4] = {ImVec2(c.x, c.y - r), ImVec2(c.x + r, c.y), ImVec2(c.x, c.y + r), ImVec2(c.x - r, c.y)};
    dl->AddPolyline(p, 4, colour, ImDrawFlags_Closed, thickness);
}

void draw_square(ImDrawList* dl, ImVec2 c, float r, std::uint32_t colour, bool filled) {
    const ImVec2 a(std::round(c.x - r), std::round(c.y - r)), b(std::round(c.x + r), std::round(c.y + r));
    if (filled)
        dl->AddRectFilled(a, b, colour);
    else
        dl->AddRect(a, b, colour, 0.0f, 0, std::max(1.0f, std::round(r * 0.25f)));
}

void draw_warning_sign(ImDrawList* dl, ImVec2 c, float r, std::uint32_t colour) {
    dl->AddTriangleFilled(ImVec2(c.x, c.y - r), ImVec2(c.x + r * 1.1f, c.y + r * 0.9f),
                          ImVec2(c.x - r * 1.1f, c.y + r * 0.9f), colour);
    const float w = std::max(1.0f, std::round(r * 0.22f));
    dl->AddRectFilled(ImVec2(std::round(c.x - w * 0.5f), std::round(c.y - r * 0.45f)),
                      ImVec2(std::round(c.x + w * 0.5f), std::round(c.y + r * 0.3f)), palette::kBackground);
    dl->AddRectFilled(ImVec2(std::round(c.x - w * 0.5f), std::round(c.y + r * 0.45f)),
                      ImVec2(std::round(c.x + w * 0.5f), std::round(c.y + r * 0.45f + w)), palette::kBackground);
}

void draw_panel(ImDrawList* dl, float x0, float y0, float w, float h) {
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel,
                      std::round(0.25f * font_px(FontFace::body)));
}

std::string fit_text(FontFace face, const std::string& text, float max_w) {
    if (text_size(face, text).x <= max_w) return text;
    const std::string ell = "\xE2\x80\xA6";
    std::string s = text;
    while (!s.empty()) {
        do s.pop_back();
        while (!s.empty() && (static_cast<unsigned char>(s.back()) & 0xC0) == 0x80);  // a UTF-8 continuation byte
        if (!s.empty()) s.pop_back();
        if (text_size(face, s + ell).x <= max_w) break;
    }
    while (!s.empty() && s.back() == ' ') s.pop_back();
    return s + ell;
}

std::vector<std::string> wrap_lines(FontFace face, std::string_view text, float max_w) {
    std::vector<std::string> lines;
    std::string line;
    pitch::for_each_part(text, ' ', [&](std::string_view word) {
        if (word.empty()) return;
        std::string joined = line.empty() ? std::string(word) : line + " " + std::string(word);
        if (!line.empty() && text_size(face, joined).x > max_w) {
            lines.push_back(fit_text(face, line, max_w));
            joined = std::string(word);
        }
        line = std::move(joined);
    });
    if (!line.empty()) lines.push_back(fit_text(face, line, max_w));
    return lines;
}

std::string signed_text(double v, int decimals) {
    char buf[32];
    const double shown = std::fabs(v) < 0.5 * std::pow(10.0, -decimals) ? 0.0 : v;
    std::snprintf(buf, sizeof buf, "%.*f", decimals, std::fabs(shown));
    if (shown > 0.0) return std::string("+") + buf;
    if (shown < 0.0) return std::string("\xE2\x88\x92") + buf;
    return buf;
}

void draw_verdict_readout(ImDrawList* dl, float right, float ty, float ny, Tuning t, bool live, const std::string& word,
                          const std::string& num, const std::string& unit) {
    const float u = ui_unit();
    const float medium = font_px(FontFace::medium);
    const std::uint32_t col = live ? tuning_colour(t) : palette::kTextDim;
    const float word_w = std::max(text_size(FontFace::medium, word).x, text_size(FontFace::body, unit).x);
    const float shape_r = std::round(0.42f * medium);
    const float word_x = right - word_w;
    draw_text(dl, FontFace::medium, ImVec2(word_x, ny), col, word);
    draw_text(dl, FontFace::body, ImVec2(word_x, ny + medium + std::round(0.25f * u)), palette::kTextDim, unit);
    float num_right = word_x - std::round(0.6f * u);
    if (live) {
        const float shape_x = word_x - std::round(0.7f * u) - shape_r;
        draw_tuning_shape(dl, t, ImVec2(shape_x, ny + 0.55f * medium), shape_r, col);
        num_right = shape_x - shape_r - std::round(0.6f * u);
    }
    const FontFace nf = live ? FontFace::large : FontFace::medium;
    draw_text(dl, nf, ImVec2(num_right - text_size(nf, num).x, live ? ty : ny), col, num);
}

}  // namespace beatless::ui
