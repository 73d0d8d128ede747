// Settings — drone defaults, A4, text size, in-tune window, audio devices,
// and the hearing caution again. Every change is saved (ui/session/settings.h) and
// takes effect at once; a new text size from the next frame, a new device
// by reopening the engine.
#include "audio/midi_out.h"
#include "pitch/base/text.h"
#include "ui/render/imgui_host.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>
#include <vector>

namespace beatless::ui {

namespace {

ImVec4 v4(std::uint32_t c) { return ImGui::ColorConvertU32ToFloat4(c); }

class SettingsScreen final : public Screen {
public:
    ScreenId id() const override { return ScreenId::settings; }
    void build(AppState& app, const ScreenArea& area, double dt_s) override;

private:
    void section(const char* title);
    void label(const char* text);
    void indent();                       // to the fields' column
    void note(const std::string& text);  // a dim line under a field, wrapped to the column

    float col_x_ = 0.0f;  // window-relative x of the current column
    float col_w_ = 0.0f;
    void device_combo(AppState& app, const char* id, bool input);
    DevicePicker inputs_, outputs_;
    void midi_section(AppState& app, float field_w);
    void midi_port_combo(AppState& app, const char* id, bool input, float field_w);
    std::vector<audio::MidiPort> midi_ports_;  // listed again every 3 s while the screen shows
    double midi_listed_at_s_ = -1e9;

    float label_w_ = 0.0f;
    char root_buf_[32] = "";
    float font_scale_ = 0.0f;  // the slider's value while it is dragged
};

void SettingsScreen::section(const char* title) {
    ImGui::Spacing();
    ImGui::SetCursorPosX(col_x_);
    ImGui::PushFont(font_of(FontFace::medium));
    ImGui::TextUnformatted(title);
    ImGui::PopFont();
    const float x = ImGui::GetWindowPos().x + col_x_, y = ImGui::GetCursorScreenPos().y;
    ImGui::GetWindowDrawList()->AddRectFilled(ImVec2(x, y), ImVec2(x + col_w_, y + 1.0f), palette::kGrid);
    ImGui::SetCursorPosX(col_x_);
    ImGui::Dummy(ImVec2(col_w_, ImGui::GetStyle().ItemSpacing.y));
}

void SettingsScreen::label(const char* text) {
    ImGui::SetCursorPosX(col_x_);
    ImGui::AlignTextToFramePadding();
    ImGui::TextColored(v4(palette::kTextDim), "%s", text);
    ImGui::SameLine();
    ImGui::SetCursorPosX(col_x_ + label_w_);
}

void SettingsScreen::indent() { ImGui::SetCursorPosX(col_x_ + label_w_); }

void SettingsScreen::note(const std::string& text) {
    indent();
    ImGui::PushTextWrapPos(col_x_ + col_w_);
    ImGui::PushStyleColor(ImGuiCol_Text, v4(palette::kTextDim));
    ImGui::TextWrapped("%s", text.c_str());
    ImGui::PopStyleColor();
    ImGui::PopTextWrapPos();
}

void SettingsScreen::device_combo(AppState& app, const char* id, bool input) {
    const Settings& s = app.settings();
    const std::string& cur = input ? s.input_device : s.output_device;
    std::string chosen;
    if (!(input ? inputs_ : outputs_)
             .combo(app, id, cur, cur.empty() ? std::string("system default") : cur, input, false, chosen))
        return;
    input ? app.set_devices(chosen, s.output_device) : app.set_devices(s.input_device, chosen);
}

void SettingsScreen::midi_port_combo(AppState& app, const char* id, bool input, float field_w) {
    const Settings& s = app.settings();
    const std::string& cur = input ? s.midi_in : s.midi_out;
    ImGui::SetNextItemWidth(field_w);
    if (!ImGui::BeginCombo(id, cur.empty() ? "none" : cur.c_str())) return;
    std::string chosen = cur;
    if (ImGui::Selectable("none", cur.empty())) chosen.clear();
    for (const audio::MidiPort& p : midi_ports_)
        if (p.input == input && ImGui::Selectable((p.name + "  (" + p.api + ")").c_str(), p.name == cur))
            chosen = p.name;
    ImGui::EndCombo();
    if (chosen != cur)
        input ? app.set_midi(s.midi_out, s.midi_tuning, chosen) : app.set_midi(chosen, s.midi_tuning, s.midi_in);
}

void SettingsScreen::midi_section(AppState& app, float field_w) {
    const Settings& s = app.settings();
    if (ImGui::GetTime() - midi_listed_at_s_ > 3.0) {
        midi_ports_ = audio::list_midi_ports();
        midi_listed_at_s_ = ImGui::GetTime();
    }
    section("MIDI");
    label("Synth");
    midi_port_combo(app, "##midi_out", false, field_w);
    label("Retune by");
    ImGui::SetNextItemWidth(field_w);
    const bool mts = s.midi_tuning != "bend";
    if (ImGui::BeginCombo("##midi_tuning", mts ? "tuning messages (MTS)" : "pitch bend, a channel a voice")) {
        if (ImGui::Selectable("tuning messages (MTS)", mts)) app.set_midi(s.midi_out, "mts", s.midi_in);
        if (ImGui::Selectable("pitch bend, a channel a voice", !mts)) app.set_midi(s.midi_out, "bend", s.midi_in);
        ImGui::EndCombo();
    }
    label("Keyboard");
    midi_port_combo(app, "##midi_in", true, field_w);
    note(midi_ports_.empty()
             ? std::string("No MIDI ports: start a MIDI system (ALSA sequencer or JACK) and its ports appear here.")
             : std::string("While the drone is on, the synth plays it and a fixed target, tuned exactly. A key sets "
                           "the root; a key held with it, the target. A synth that ignores MTS plays tempered: "
                           "choose pitch bend."));
}

void SettingsScreen::build(AppState& app, const ScreenArea& area, double dt_s) {
    (void)dt_s;
    const float u = ui_unit();
    const Settings& s = app.settings();
    label_w_ = std::round(7.5f * u);
    const float pad = std::round(1.5f * u);
    begin_screen_panel("##settings", area, ImVec2(pad, std::round(0.6f * u)), true);
    // Two columns when the window is wide enough, one otherwise.
    const float gap = std::round(2.0f * u);
    const bool two = area.size.x - 2.0f * pad - gap >= 2.0f * 22.0f * u;
    col_w_ = two ? std::min(std::round(0.5f * (area.size.x - 2.0f * pad - gap)), std::round(32.0f * u))
                 : std::min(area.size.x - 2.0f * pad, std::round(36.0f * u));
    const float col_w = col_w_;
    const float field_w = col_w - label_w_;
    col_x_ = pad;
    const float top_y = ImGui::GetCursorPosY();
    section("Drone");
    label("Root");
    if (!ImGui::GetIO().WantTextInput) std::snprintf(root_buf_, sizeof root_buf_, "%s", s.root.c_str());
    ImGui::SetNextItemWidth(std::round(5.0f * u));
    if (ImGui::InputText("##root", root_buf_, sizeof root_buf_, ImGuiInputTextFlags_EnterReturnsTrue))
        app.set_root_text(root_buf_);
    ImGui::SameLine();
    ImGui::TextColored(v4(palette::kTextDim), "%.2f Hz", app.root_hz());
    note("A note (D3, Bb2) or a frequency in Hz; Enter applies it.");
    label("Timbre");
    ImGui::SetNextItemWidth(std::round(8.0f * u));
    if (ImGui::BeginCombo("##timbre", std::string(audio::timbre_name(s.timbre)).c_str())) {
        for (audio::Timbre t : audio::all_timbres())
            if (ImGui::Selectable(std::string(audio::timbre_name(t)).c_str(), t == s.timbre)) app.set_timbre(t);
        ImGui::EndCombo();
    }
    label("Level");
    float level = static_cast<float>(s.level_dbfs);
    ImGui::SetNextItemWidth(field_w);
    if (ImGui::SliderFloat("##level", &level, static_cast<float>(audio::kDroneMinLevelDbfs),
                           static_cast<float>(audio::kDroneMaxLevelDbfs), "%.0f dBFS RMS"))
        app.set_drone_level(std::round(level));
    char buf[160];
    std::snprintf(buf, sizeof buf,
                  "Starts from silence and rises to this level in a second; a limiter holds peaks at %.0f dBFS.",
                  audio::kDroneCeilingDbfs);
    note(buf);
    label("Add");
    bool fifth = s.fifth, octave = s.octave;
    if (ImGui::Checkbox("fifth (3/2)", &fifth)) app.set_fifth(fifth);
    ImGui::SameLine(0, 1.5f * u);
    if (ImGui::Checkbox("octave (2/1)", &octave)) app.set_octave(octave);

    section("Reference and readings");
    label("A4");
    float a4 = static_cast<float>(s.a4_hz);
    ImGui::SetNextItemWidth(std::round(8.0f * u));
    if (ImGui::DragFloat("##a4", &a4, 0.1f, 400.0f, 480.0f, "%.1f Hz")) app.set_a4(std::round(a4 * 10.0f) / 10.0);
    ImGui::SameLine();
    if (ImGui::Button("back to 440")) app.set_a4(440.0);
    label("In tune within");
    float tol = static_cast<float>(s.in_tune_cents);
    ImGui::SetNextItemWidth(field_w);
    if (ImGui::SliderFloat("##tol", &tol, 1.0f, 25.0f, "\xC2\xB1%.0f cents")) app.set_in_tune_cents(std::round(tol));
    label("Lowest note");
    {
        // Three useful floors: the lower, the longer each reading's window.
        struct Floor {
            double hz;
            const char* text;
        };
        static constexpr Floor kFloors[] = {{kDefaultLowestHz, "60 Hz: voices, strings to a cello's C"},
                                            {55.0, "55 Hz: a low bass voice"},
                                            {38.0, "38 Hz: double bass"}};
        std::string shown = pitch::format_trimmed(s.lowest_hz, 1) + " Hz";
        for (const Floor& f : kFloors)
            if (f.hz == s.lowest_hz) shown = f.text;
        ImGui::SetNextItemWidth(field_w);
        if (ImGui::BeginCombo("##lowest", shown.c_str())) {
            for (const Floor& f : kFloors)
                if (ImGui::Selectable(f.text, f.hz == s.lowest_hz)) app.set_lowest_hz(f.hz);
            ImGui::EndCombo();
        }
        if (s.lowest_hz < kDefaultLowestHz)
            note("A lower floor needs a longer window: readings settle a little later.");
    }

    section("Display");
    label("Text size");
    if (!ImGui::IsAnyItemActive() || font_scale_ <= 0.0f) font_scale_ = s.font_scale;
    ImGui::SetNextItemWidth(field_w);
    ImGui::SliderFloat("##font", &font_scale_, 0.5f, 3.0f, "%.1f x");
    if (ImGui::IsItemDeactivatedAfterEdit()) {
        const float v = std::round(font_scale_ * 10.0f) / 10.0f;
        app.set_font_scale(v);
        if (ImGuiHost* host = ImGuiHost::current()) host->set_font_scale(v);
    }

    if (two) {
        col_x_ = pad + col_w + gap;
        ImGui::SetCursorPosY(top_y);
    }
    section("Audio devices");
    label("Input");
    ImGui::SetNextItemWidth(field_w);
    device_combo(app, "##input", true);
    label("Output");
    ImGui::SetNextItemWidth(field_w);
    device_combo(app, "##output", false);
    note("Listening now: " + app.input_text());
    if (app.options().demo) note("With --demo the demo performer replaces the input in this run.");

    midi_section(app, field_w);

    section("Hearing caution");
    ImGui::SetCursorPosX(col_x_);
    ImGui::PushTextWrapPos(col_x_ + col_w);
    ImGui::TextWrapped("%s", caution_text());
    ImGui::PopTextWrapPos();
    ImGui::Spacing();
    ImGui::SetCursorPosX(col_x_);
    if (app.caution_needed()) {
        ImGui::PushStyleColor(ImGuiCol_Button, v4(palette::kAccent));
        if (ImGui::Button("I understand")) app.acknowledge_caution();
        ImGui::PopStyleColor();
        ImGui::SameLine();
        ImGui::TextColored(v4(palette::kWarning), "The drone stays off until you confirm.");
    } else {
        ImGui::TextColored(v4(palette::kTextDim), "Acknowledged. The drone can be started with Space.");
    }

    section("Files");
    ImGui::SetCursorPosX(col_x_);
    if (app.settings_file().empty() || !app.options().save_settings) {
        ImGui::TextColored(v4(palette::kTextDim), "Settings are not saved in this run");
    } else {
        ImGui::TextColored(v4(palette::kTextDim), "Settings are saved in");
        ImGui::SetCursorPosX(col_x_);
        ImGui::PushTextWrapPos(col_x_ + col_w);
        ImGui::TextWrapped("%s", app.settings_file().string().c_str());
        ImGui::PopTextWrapPos();
    }

    end_screen_panel();
}

}  // namespace

std::unique_ptr<Screen> make_settings_screen() { return std::make_unique<SettingsScreen>(); }

}  // namespace beatless::ui
