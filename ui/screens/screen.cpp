// ScreenDeck — see screen.h.
//
// Index
//   [list]     make_screens, built_screens
//   [style]    ImGui colours and sizes from the palette
//   [keys]     the global keys
//   [bars]     tab bar, caution banner, status bar, messages
//   [help]     the help overlay
//   [frame]    build_frame
#include "ui/screens/screen.h"

#include "ui/render/imgui_host.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen_review.h"
#include "ui/screens/widgets.h"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>  // key codes only: the window feeds GLFW's codes into io.KeysDown

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

namespace beatless::ui {

// ---------------------------------------------------------------------------
// [SECTION] List
// ---------------------------------------------------------------------------

std::vector<std::unique_ptr<Screen>> make_screens() {
    std::vector<std::unique_ptr<Screen>> s;
    s.push_back(make_practice_screen());
    s.push_back(make_drills_screen());
    s.push_back(make_ensemble_screen());
    s.push_back(make_review_screen());
    s.push_back(make_settings_screen());
    return s;
}

std::vector<ScreenId> built_screens() {
    std::vector<ScreenId> ids;
    for (const auto& s : make_screens()) ids.push_back(s->id());
    return ids;
}

std::string built_screen_keys() {
    std::string out;
    for (ScreenId id : built_screens()) {
        if (!out.empty()) out += ", ";
        out += screen_key(id);
    }
    return out;
}

float ui_unit() { return font_px(FontFace::body); }

bool DevicePicker::combo(AppState& app, const char* id, const std::string& current, const std::string& shown,
                         bool input, bool show_channels, std::string& chosen) {
    if (app.app_time_s() - listed_at_s_ > 5.0) {  // a device plugged in shows up soon
        devices_ = app.devices();
        listed_at_s_ = app.app_time_s();
    }
    bool picked = false;
    if (ImGui::BeginCombo(id, shown.c_str())) {
        if (ImGui::Selectable("system default", current.empty())) {
            chosen.clear();
            picked = true;
        }
        for (const audio::DeviceInfo& d : devices_) {
            const int channels = input ? d.max_input_channels : d.max_output_channels;
            if (channels <= 0) continue;
            std::string text = d.name + "  (" + d.host_api;
            if (show_channels) text += ", " + std::to_string(channels) + (input ? " in" : " out");
            if (input ? d.default_input : d.default_output) text += ", default";
            text += ")";
            if (ImGui::Selectable(text.c_str(), d.name == current)) {
                chosen = d.name;
                picked = true;
            }
        }
        if (devices_.empty())
            ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(palette::kTextDim), "no audio devices found");
        ImGui::EndCombo();
    }
    return picked;
}

namespace {

constexpr ImGuiWindowFlags kFixed = ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove |
                                    ImGuiWindowFlags_NoSavedSettings | ImGuiWindowFlags_NoBringToFrontOnFocus |
                                    ImGuiWindowFlags_NoScrollWithMouse;

ImVec4 v4(std::uint32_t c) { return ImGui::ColorConvertU32ToFloat4(c); }

// The caution as DESIGN.md words it (the banner), and with the why (Settings).
constexpr const char* kCautionShort =
    "The drone is a sustained tone. Keep the level low, especially on headphones, and take breaks.";
constexpr const char* kCautionText =
    "The drone is a sustained tone. Keep the level low, especially on headphones, and take breaks. "
    "The drone starts quietly and its peaks are limited to -6 dBFS, but your volume control comes after that.";

// The screens that record a take (R, and the Record button in the status bar).
bool records(ScreenId id) { return id == ScreenId::practice || id == ScreenId::drills || id == ScreenId::ensemble; }

constexpr KeyHelp kGlobalKeys[] = {
    {"Space", "start or stop the drone"},
    {"\xE2\x86\x92 / \xE2\x86\x90", "next / previous target (fixes the target)"},
    {"N", "follow the nearest target again"},
    {"\xE2\x86\x91 / \xE2\x86\x93", "root up / down a semitone"},
    {"] / [", "drone level up / down 1 dB"},
    {"F", "drone fifth on / off"},
    {"R", "record a take / stop (Practice, Drills, Ensemble)"},
    {"T", "sound the reference: the target, once"},
    {"Tab", "next screen"},
    {"H or F1", "this help"},
    {"Esc", "close the help; back to Practice"},
};

}  // namespace

const char* caution_text() { return kCautionText; }

// ---------------------------------------------------------------------------
// [SECTION] Style
// ---------------------------------------------------------------------------

ScreenDeck::ScreenDeck(AppState& app) : app_(app), screens_(make_screens()) { show(app.settings().screen); }
ScreenDeck::~ScreenDeck() = default;

void ScreenDeck::show(ScreenId id) {
    for (std::size_t i = 0; i < screens_.size(); ++i)
        if (screens_[i]->id() == id) switch_to(i);
}

void ScreenDeck::switch_to(std::size_t index) {
    if (index != current_ && current_ < screens_.size()) screens_[current_]->left(app_);
    current_ = index;
    app_.set_screen(screens_[index]->id());
}

void ScreenDeck::apply_style() {
    ImGuiStyle& st = ImGui::GetStyle();
    ImVec4* c = st.Colors;
    c[ImGuiCol_Text] = v4(palette::kText);
    c[ImGuiCol_TextDisabled] = v4(palette::kTextFaint);
    c[ImGuiCol_WindowBg] = v4(palette::kBackground);
    c[ImGuiCol_ChildBg] = v4(palette::kPanel);
    c[ImGuiCol_PopupBg] = v4(palette::kPanelRaised);
    c[ImGuiCol_Border] = v4(palette::kGrid);
    c[ImGuiCol_FrameBg] = v4(palette::kPanelRaised);
    c[ImGuiCol_FrameBgHovered] = v4(palette::with_alpha(palette::kAccent, 150));
    c[ImGuiCol_FrameBgActive] = v4(palette::kAccent);
    c[ImGuiCol_Button] = v4(palette::kPanelRaised);
    c[ImGuiCol_ButtonHovered] = v4(palette::with_alpha(palette::kAccent, 170));
    c[ImGuiCol_ButtonActive] = v4(palette::kAccent);
    c[ImGuiCol_Header] = v4(palette::with_alpha(palette::kAccent, 140));
    c[ImGuiCol_HeaderHovered] = v4(palette::with_alpha(palette::kAccent, 190));
    c[ImGuiCol_HeaderActive] = v4(palette::kAccent);
    c[ImGuiCol_CheckMark] = v4(palette::kText);
    c[ImGuiCol_SliderGrab] =
        v4(palette::kAccent);  // not the text colour: the value stays readable where the grab crosses it
    c[ImGuiCol_SliderGrabActive] = v4(palette::kYellow);
    c[ImGuiCol_Separator] = v4(palette::kGrid);
    c[ImGuiCol_ModalWindowDimBg] = v4(palette::with_alpha(palette::kBackground, 200));
    st.FrameRounding = std::round(0.2f * ui_unit());
    st.WindowRounding = 0.0f;
    st.ChildRounding = std::round(0.25f * ui_unit());
    st.GrabRounding = st.FrameRounding;
    st.WindowBorderSize = 0.0f;
    st.FrameBorderSize = 1.0f;
}

// ---------------------------------------------------------------------------
// [SECTION] Keys
// ---------------------------------------------------------------------------

void ScreenDeck::handle_keys() {
    const ImGuiIO& io = ImGui::GetIO();
    if (io.WantTextInput) return;  // typing in a field: no shortcuts
    auto pressed = [](int key, bool repeat = false) { return ImGui::IsKeyPressed(key, repeat); };
    if (pressed(GLFW_KEY_H) || pressed(GLFW_KEY_F1)) help_ = !help_;
    if (pressed(GLFW_KEY_ESCAPE)) {
        if (help_)
            help_ = false;
        else
            show(ScreenId::practice);
    }
    if (pressed(GLFW_KEY_TAB)) switch_to((current_ + 1) % screens_.size());
    if (pressed(GLFW_KEY_SPACE)) app_.toggle_drone();
    if (pressed(GLFW_KEY_RIGHT, true)) app_.step_target(+1);
    if (pressed(GLFW_KEY_LEFT, true)) app_.step_target(-1);
    if (pressed(GLFW_KEY_N)) app_.set_choice(TargetChoice::nearest);
    if (pressed(GLFW_KEY_UP, true)) app_.step_root(+1);
    if (pressed(GLFW_KEY_DOWN, true)) app_.step_root(-1);
    if (pressed(GLFW_KEY_RIGHT_BRACKET, true)) app_.set_drone_level(app_.settings().level_dbfs + 1.0);
    if (pressed(GLFW_KEY_LEFT_BRACKET, true)) app_.set_drone_level(app_.settings().level_dbfs - 1.0);
    if (pressed(GLFW_KEY_F)) app_.set_fifth(!app_.settings().fifth);
    if (pressed(GLFW_KEY_T)) app_.sound_reference();
    if (pressed(GLFW_KEY_R) && records(screens_[current_]->id())) app_.toggle_recording();
    if (pressed(GLFW_KEY_V)) app_.set_two_voices(!app_.two_voices());  // the Practice screen's two-voice view
}

// ---------------------------------------------------------------------------
// [SECTION] Bars
// ---------------------------------------------------------------------------

void ScreenDeck::tab_bar(float height) {
    const ImVec2 disp = ImGui::GetIO().DisplaySize;
    const float u = ui_unit();
    ImGui::SetNextWindowPos(ImVec2(0, 0));
    ImGui::SetNextWindowSize(ImVec2(disp.x, height));
    ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, ImVec2(std::round(0.6f * u), std::round(0.3f * u)));
    ImGui::Begin("##tabs", nullptr, kFixed);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    draw_text(dl, FontFace::bold, ImVec2(std::round(0.6f * u), std::round(0.5f * (height - font_px(FontFace::bold)))),
              palette::kTextDim, "Beatless");
    ImGui::SetCursorPosX(std::round(5.2f * u));
    const float bh = height - std::round(0.6f * u);
    for (std::size_t i = 0; i < screens_.size(); ++i) {
        const bool active = i == current_;
        ImGui::PushStyleColor(ImGuiCol_Button, v4(active ? palette::kAccent : palette::kPanel));
        ImGui::PushFont(font_of(active ? FontFace::bold : FontFace::body));
        const std::string label = std::string(screen_title(screens_[i]->id())) + "##tab";
        if (ImGui::Button(label.c_str(), ImVec2(std::round(7.0f * u), bh))) switch_to(i);
        ImGui::PopFont();
        ImGui::PopStyleColor();
        ImGui::SameLine();
    }
    // Right side: the drone's state in a word and a square, and the help key.
    const bool on = app_.drone_on();
    // On but with no output playing it: said, not claimed as sound.
    const std::string drone = !on ? "Drone off" : app_.drone_sounding() ? "Drone on" : "Drone on, not heard";
    const std::string help = "H  help";
    const float help_w = text_size(FontFace::body, help).x;
    const float drone_w = text_size(FontFace::bold, drone).x;
    const float ty = std::round(0.5f * (height - u));
    float x = disp.x - std::round(0.8f * u) - help_w;
    draw_text(dl, FontFace::body, ImVec2(x, ty), palette::kTextDim, help);
    x -= std::round(2.0f * u) + drone_w;
    const bool sounding = app_.drone_sounding();
    draw_text(dl, FontFace::bold, ImVec2(x, ty), sounding ? palette::kDroneOn : palette::kTextDim, drone);
    draw_square(dl, ImVec2(x - 0.8f * u, ty + 0.5f * u), 0.32f * u, sounding ? palette::kDroneOn : palette::kTextDim,
                sounding);
    ImGui::End();
    ImGui::PopStyleVar();
}

void ScreenDeck::caution_banner(const ImVec2& pos, float width, float& height_out) {
    height_out = 0.0f;
    if (!app_.caution_needed()) return;
    const float u = ui_unit();
    const float h = std::round(3.4f * u);
    ImGui::SetNextWindowPos(pos);
    ImGui::SetNextWindowSize(ImVec2(width, h));
    ImGui::PushStyleColor(ImGuiCol_WindowBg, v4(palette::kPanel));
    ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, ImVec2(std::round(3.0f * u), std::round(0.5f * u)));
    ImGui::Begin("##caution", nullptr, kFixed);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    dl->PushClipRect(pos, ImVec2(pos.x + width, pos.y + h), false);
    dl->AddRect(ImVec2(pos.x + 2, pos.y + 2), ImVec2(pos.x + width - 2, pos.y + h - 2), palette::kWarning, 0.0f, 0,
                2.0f);
    draw_warning_sign(dl, ImVec2(pos.x + 1.5f * u, pos.y + 0.5f * h), 0.8f * u, palette::kWarning);
    dl->PopClipRect();
    const float button_w = std::round(8.0f * u);
    ImGui::PushFont(font_of(FontFace::bold));
    ImGui::TextUnformatted("Hearing caution");
    ImGui::PopFont();
    ImGui::SameLine();
    ImGui::PushTextWrapPos(width - button_w - 2.0f * u);
    ImGui::TextWrapped("%s The drone stays off until you confirm.", kCautionShort);
    ImGui::PopTextWrapPos();
    ImGui::SetCursorPos(ImVec2(width - button_w - u, std::round(0.5f * (h - 1.8f * u))));
    ImGui::PushStyleColor(ImGuiCol_Button, v4(palette::kAccent));
    if (ImGui::Button("I understand", ImVec2(button_w, std::round(1.8f * u)))) app_.acknowledge_caution();
    ImGui::PopStyleColor();
    ImGui::End();
    ImGui::PopStyleVar();
    ImGui::PopStyleColor();
    height_out = h;
}

void ScreenDeck::status_bar(const ImVec2& pos, float width, float height) {
    const float u = ui_unit();
    ImGui::SetNextWindowPos(pos);
    ImGui::SetNextWindowSize(ImVec2(width, height));
    ImGui::PushStyleColor(ImGuiCol_WindowBg, v4(palette::kPanel));
    ImGui::Begin("##status", nullptr, kFixed);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const float ty = std::round(pos.y + 0.5f * (height - u));
    float x = pos.x + std::round(0.8f * u);
    auto put = [&](FontFace f, std::uint32_t col, const std::string& s, float gap_u = 1.6f) {
        draw_text(dl, f, ImVec2(x, ty), col, s);
        x += text_size(f, s).x + std::round(gap_u * u);
    };
    StatusView v;
    if (!screens_[current_]->status(app_, v)) {
        const audio::EngineStatus st = app_.status();
        v.input = app_.input_text();
        v.level_dbfs = app_.level_dbfs();
        v.clipped = app_.clip_warning();
        v.overflows = st.ring_overflow_events + st.device_input_overflows + st.device_output_underflows;
        v.latency_s = app_.engine_running() ? st.latency_s : 0.0;
        v.input_lost = input_lost(st, app_.engine_running());
    }
    put(FontFace::body, palette::kTextDim, "Input", 0.5f);
    put(FontFace::bold, palette::kText, v.input, v.input_lost || was_lost_ ? 0.6f : 1.6f);
    // The loss while it lasts, then the return for a few seconds.
    constexpr double kRejoinedShownS = 5.0;
    if (was_lost_ && !v.input_lost) rejoined_at_s_ = app_.app_time_s();
    was_lost_ = v.input_lost;
    if (v.input_lost)
        put(FontFace::bold, palette::kWarning, "lost: rejoining");
    else if (app_.app_time_s() - rejoined_at_s_ < kRejoinedShownS)
        put(FontFace::bold, palette::kText, "back");

    // Input level: a bar from -60 to 0 dBFS, its value, and CLIP in words.
    const double lvl = v.level_dbfs;
    const float bar_w = std::round(7.0f * u), bar_h = std::round(0.55f * u);
    const float by = std::round(pos.y + 0.5f * (height - bar_h));
    put(FontFace::body, palette::kTextDim, "level", 0.5f);
    dl->AddRectFilled(ImVec2(x, by), ImVec2(x + bar_w, by + bar_h), palette::kPanelRaised);
    if (std::isfinite(lvl)) {
        const float f = static_cast<float>(std::clamp((lvl + 60.0) / 60.0, 0.0, 1.0));
        dl->AddRectFilled(ImVec2(x, by), ImVec2(std::round(x + f * bar_w), by + bar_h),
                          lvl > -6.0 ? palette::kLevelHot : palette::kLevelOk);
    }
    dl->AddRect(ImVec2(x, by), ImVec2(x + bar_w, by + bar_h), palette::kGrid);
    x += bar_w + std::round(0.5f * u);
    char buf[64];
    if (std::isfinite(lvl) && lvl > -90.0)
        std::snprintf(buf, sizeof buf, "%s dBFS", signed_text(lvl, 0).c_str());
    else
        std::snprintf(buf, sizeof buf, "silent");
    put(FontFace::mono, palette::kTextDim, buf, 0.6f);
    if (v.clipped) {
        const std::string clip = "CLIP";
        const ImVec2 ts = text_size(FontFace::bold, clip);
        dl->AddRectFilled(ImVec2(x - 0.2f * u, ty - 0.1f * u), ImVec2(x + ts.x + 0.2f * u, ty + ts.y + 0.1f * u),
                          palette::kClip, 3.0f);
        draw_text(dl, FontFace::bold, ImVec2(x, ty), palette::kBackground, clip);
        x += ts.x + std::round(1.6f * u);
    } else {
        x += std::round(1.0f * u);
    }

    const unsigned long long over = v.overflows;
    std::snprintf(buf, sizeof buf, "overflows %llu", over);
    if (over > 0) {
        draw_warning_sign(dl, ImVec2(x + 0.5f * u, ty + 0.5f * u), 0.45f * u, palette::kWarning);
        x += std::round(1.2f * u);
    }
    put(FontFace::body, over > 0 ? palette::kWarning : palette::kTextDim, buf);
    if (v.latency_s > 0.0)
        std::snprintf(buf, sizeof buf, "latency %.0f ms", 1000.0 * v.latency_s);
    else
        std::snprintf(buf, sizeof buf, "latency \xE2\x80\x93");
    put(FontFace::body, palette::kTextDim, buf);
    if (records(screens_[current_]->id()) || app_.recording())
        record_control(pos, width, height, x - std::round(1.0f * u));
    ImGui::End();
    ImGui::PopStyleColor();
}

// Right end of the status bar: while a take records, a red dot, REC, its time and name (without its date, or
// without it at all, when the bar has no room left of free_x); the Record / Stop button.
void ScreenDeck::record_control(const ImVec2& pos, float width, float height, float free_x) {
    const float u = ui_unit();
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const bool on = app_.recording();
    const float bw = std::round(text_size(FontFace::body, "Record").x + 1.4f * u), bh = ImGui::GetFrameHeight();
    const float bx = pos.x + width - std::round(0.8f * u) - bw;
    ImGui::SetCursorScreenPos(ImVec2(bx, std::round(pos.y + 0.5f * (height - bh))));
    ImGui::PushStyleColor(ImGuiCol_Button, v4(on ? palette::kRecording : palette::kPanelRaised));
    if (ImGui::Button(on ? "Stop##take" : "Record##take", ImVec2(bw, bh))) app_.toggle_recording();
    ImGui::PopStyleColor();
    if (!on) return;
    const int secs = static_cast<int>(app_.recording_s());
    char t[32];
    std::snprintf(t, sizeof t, "%d:%02d", secs / 60, secs % 60);
    // What fits left of the button, most first: REC and the full name; REC and the name without its date; the
    // name without its date alone (the red dot and the red Stop button still say it records); the time alone.
    std::string name = app_.recording_name();  // "2026-12-03_161502" or "2026-12-03_161502-2"
    const std::string short_name =
        name.find('_') != std::string::npos ? "\xE2\x80\xA6" + name.substr(name.find('_')) : name;
    const float time_w = std::round(1.1f * u) + text_size(FontFace::mono, t).x + std::round(0.8f * u);
    const float rec_w = text_size(FontFace::bold, "REC").x + std::round(0.5f * u);
    const auto fits = [&](const std::string& n, bool rec) {
        return bx - time_w - (rec ? rec_w : 0.0f) - std::round(0.6f * u) - text_size(FontFace::body, n).x >= free_x;
    };
    bool rec = true;
    if (!fits(name, true)) name = short_name;
    if (!fits(name, true)) rec = false;
    if (!fits(name, false)) name.clear(), rec = true;
    const float ty = std::round(pos.y + 0.5f * (height - u));
    float x = bx - std::round(0.8f * u) - text_size(FontFace::body, name).x;
    draw_text(dl, FontFace::body, ImVec2(x, ty), palette::kTextDim, name);
    x -= (name.empty() ? 0.0f : std::round(0.6f * u)) + text_size(FontFace::mono, t).x;
    draw_text(dl, FontFace::mono, ImVec2(x, ty), palette::kText, t);
    if (rec) {
        x -= rec_w;
        draw_text(dl, FontFace::bold, ImVec2(x, ty), palette::kRecording, "REC");
    }
    dl->AddCircleFilled(ImVec2(x - 0.6f * u, ty + 0.5f * u), 0.32f * u, palette::kRecording, 16);
}

float ScreenDeck::messages_height() const {
    const auto& ms = app_.messages();
    if (ms.empty()) return 0.0f;
    return std::round(1.5f * ui_unit()) * static_cast<float>(ms.size()) + std::round(0.4f * ui_unit());
}

void ScreenDeck::messages(const ImVec2& bottom_left, float width) {
    const auto& ms = app_.messages();
    if (ms.empty()) return;
    const float u = ui_unit();
    const float line_h = std::round(1.5f * u);
    const float h = messages_height();
    const ImVec2 pos(bottom_left.x, bottom_left.y - h);
    ImDrawList* dl = ImGui::GetForegroundDrawList();
    dl->AddRectFilled(pos, ImVec2(pos.x + width, bottom_left.y), palette::kPanelRaised);
    dl->AddLine(ImVec2(pos.x, pos.y + 0.5f), ImVec2(pos.x + width, pos.y + 0.5f), palette::kGrid);
    float y = pos.y + std::round(0.2f * u);
    for (const Message& m : ms) {
        const float ty = y + std::round(0.5f * (line_h - u));
        if (m.warning) draw_warning_sign(dl, ImVec2(pos.x + 1.0f * u, ty + 0.5f * u), 0.45f * u, palette::kWarning);
        dl->PushClipRect(pos, ImVec2(pos.x + width - u, bottom_left.y), true);
        draw_text(dl, FontFace::body, ImVec2(pos.x + 2.0f * u, ty), palette::kText, m.text);
        dl->PopClipRect();
        y += line_h;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Help
// ---------------------------------------------------------------------------

void ScreenDeck::help_overlay() {
    if (!help_) return;
    const ImVec2 disp = ImGui::GetIO().DisplaySize;
    const float u = ui_unit();
    const std::span<const KeyHelp> own = screens_[current_]->keys();
    const float row_h = std::round(1.45f * u);
    const float key_w = std::round(7.5f * u);
    float text_w = 0.0f;
    for (const KeyHelp& k : kGlobalKeys) text_w = std::max(text_w, text_size(FontFace::body, k.what).x);
    for (const KeyHelp& k : own) text_w = std::max(text_w, text_size(FontFace::body, k.what).x);
    const float w = std::min(disp.x - 2.0f * u, key_w + text_w + std::round(2.5f * u));
    // A description wider than the window goes on to more lines, under itself.
    const float what_w = w - key_w - std::round(2.0f * u);
    std::size_t lines = 0;
    for (const KeyHelp& k : kGlobalKeys) lines += std::max<std::size_t>(1, wrap_lines(FontFace::body, k.what, what_w).size());
    for (const KeyHelp& k : own) lines += std::max<std::size_t>(1, wrap_lines(FontFace::body, k.what, what_w).size());
    const std::size_t rows = lines + (own.empty() ? 0 : 1);
    const float h = std::min(disp.y - 2.0f * u, row_h * static_cast<float>(rows) + std::round(5.0f * u));
    ImGui::SetNextWindowPos(ImVec2(std::round(0.5f * (disp.x - w)), std::round(0.5f * (disp.y - h))));
    ImGui::SetNextWindowSize(ImVec2(w, h));
    ImGui::PushStyleColor(ImGuiCol_WindowBg, v4(palette::kPanelRaised));
    ImGui::PushStyleVar(ImGuiStyleVar_WindowBorderSize, 2.0f);
    ImGui::Begin("##help", nullptr,
                 ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove | ImGuiWindowFlags_NoSavedSettings);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const ImVec2 p = ImGui::GetWindowPos();
    draw_text(dl, FontFace::medium, ImVec2(p.x + u, p.y + 0.7f * u), palette::kText, "Keys");
    float y = p.y + std::round(0.9f * u) + font_px(FontFace::medium) + std::round(0.4f * u);
    auto row = [&](const KeyHelp& k) {
        draw_text(dl, FontFace::bold, ImVec2(p.x + u, y), palette::kYellow, k.keys);
        const std::vector<std::string> what = wrap_lines(FontFace::body, k.what, what_w);
        for (std::size_t i = 0; i < what.size(); ++i) {
            draw_text(dl, FontFace::body, ImVec2(p.x + u + key_w, y), palette::kText, what[i]);
            if (i + 1 < what.size()) y += std::round(0.85f * row_h);
        }
        y += row_h;
    };
    for (const KeyHelp& k : kGlobalKeys) row(k);
    if (!own.empty()) {
        y += std::round(0.3f * row_h);
        for (const KeyHelp& k : own) row(k);
    }
    draw_text(dl, FontFace::body, ImVec2(p.x + u, p.y + h - 1.6f * u), palette::kTextDim, "Press H or Esc to close.");
    if (ImGui::IsMouseClicked(0) && !ImGui::IsWindowHovered()) help_ = false;
    ImGui::End();
    ImGui::PopStyleVar();
    ImGui::PopStyleColor();
}

// ---------------------------------------------------------------------------
// [SECTION] Frame
// ---------------------------------------------------------------------------

void ScreenDeck::build_frame(double dt_s) {
    apply_style();
    handle_keys();
    const ImVec2 disp = ImGui::GetIO().DisplaySize;
    const float u = ui_unit();
    const float tab_h = std::round(2.3f * u);
    const float status_h = std::round(1.9f * u);
    tab_bar(tab_h);
    float banner_h = 0.0f;
    caution_banner(ImVec2(0, tab_h), disp.x, banner_h);
    const float top = tab_h + banner_h;
    // Messages stand between the screen and the status bar: the screen gives
    // up their rows rather than have its controls covered.
    const float messages_h = messages_height();
    ScreenArea area{ImVec2(0, top), ImVec2(disp.x, std::max(0.0f, disp.y - top - status_h - messages_h))};
    screens_[current_]->build(app_, area, dt_s);
    status_bar(ImVec2(0, disp.y - status_h), disp.x, status_h);
    messages(ImVec2(0, disp.y - status_h), disp.x);
    help_overlay();
}

ImDrawList* begin_screen_panel(const char* id, const ScreenArea& area, ImVec2 padding, bool wheel_scrolls) {
    ImGuiWindowFlags flags = ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove |
                             ImGuiWindowFlags_NoSavedSettings | ImGuiWindowFlags_NoBringToFrontOnFocus;
    if (!wheel_scrolls) flags |= ImGuiWindowFlags_NoScrollWithMouse;
    ImGui::SetNextWindowPos(area.pos);
    ImGui::SetNextWindowSize(area.size);
    ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, padding);
    ImGui::Begin(id, nullptr, flags);
    return ImGui::GetWindowDrawList();
}

void end_screen_panel() {
    ImGui::End();
    ImGui::PopStyleVar();
}

}  // namespace beatless::ui
