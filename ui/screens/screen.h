// Screens — the framework every screen plugs into (Screen), and the deck that runs them.
// Method: one class per screen in its own file, listed in tab order by make_screens(); the deck draws what every
// screen shares, all with Dear ImGui in the colours of ui/screens/palette.h. Detail: DEVELOPERS.md.
// Thread: the UI thread. Allocates: yes (never on an audio path).
#pragma once

#include "ui/session/app_state.h"
#include "ui/session/screen_id.h"

#include <imgui.h>

#include <cmath>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

struct ScreenArea {
    ImVec2 pos;   // top-left, pixels
    ImVec2 size;  // width, height in pixels
};

// A screen's one panel: an undecorated, fixed window over `area` with this
// padding; the mouse wheel scrolls it only when asked. Returns its draw list;
// end_screen_panel() closes it.
ImDrawList* begin_screen_panel(const char* id, const ScreenArea& area, ImVec2 padding = ImVec2(0, 0),
                               bool wheel_scrolls = false);
void end_screen_panel();

struct KeyHelp {
    std::string_view keys;  // "Space"
    std::string_view what;  // "start or stop the drone"
};

// What the status bar shows: the deck fills it from the Practice engine
// unless the current screen has an input of its own (the Ensemble screen).
struct StatusView {
    std::string input;
    double level_dbfs = -INFINITY;
    bool clipped = false;
    unsigned long long overflows = 0;  // ring overflows + device overflows and underflows
    double latency_s = 0.0;            // 0 when unknown
    bool input_lost = false;           // the input device stopped; the engine tries to rejoin it every second
};

// True when a running engine's device input has stopped delivering audio.
inline bool input_lost(const audio::LiveStatus& st, bool running) {
    return running && st.input == audio::InputKind::device && !st.input_ok && !st.finished;
}

class Screen {
public:
    virtual ~Screen() = default;
    virtual ScreenId id() const = 0;
    // Builds the screen into `area` (between ImGui::NewFrame and Render).
    virtual void build(AppState& app, const ScreenArea& area, double dt_s) = 0;
    // Keys of this screen only, for the help overlay (the deck lists the global ones).
    virtual std::span<const KeyHelp> keys() const { return {}; }
    // The status bar's figures when this screen listens to an input of its
    // own; false to show the Practice engine's.
    virtual bool status(const AppState&, StatusView&) const { return false; }
    // Called when the deck moves to another screen (release what only this
    // screen uses, such as its own engine).
    virtual void left(AppState&) {}
};

std::unique_ptr<Screen> make_practice_screen();
std::unique_ptr<Screen> make_ensemble_screen();
std::unique_ptr<Screen> make_drills_screen();
std::unique_ptr<Screen> make_settings_screen();

// The built screens in tab order.
std::vector<std::unique_ptr<Screen>> make_screens();
// Keys of the built screens, for --screen checks and messages: "practice, settings".
std::vector<ScreenId> built_screens();
std::string built_screen_keys();

class ScreenDeck {
public:
    explicit ScreenDeck(AppState& app);
    ~ScreenDeck();

    void show(ScreenId id);  // ignored when that screen is not built
    ScreenId current() const { return screens_[current_]->id(); }
    bool help_open() const { return help_; }
    void set_help(bool open) { help_ = open; }

    // Builds one whole frame: keys, style, bars, the current screen, overlays.
    void build_frame(double dt_s);

private:
    void switch_to(std::size_t index);  // leaves the current screen first
    void apply_style();
    void handle_keys();
    void tab_bar(float height);
    void caution_banner(const ImVec2& pos, float width, float& height_out);
    void status_bar(const ImVec2& pos, float width, float height);
    void record_control(const ImVec2& pos, float width, float height, float free_x);
    void messages(const ImVec2& bottom_left, float width);
    float messages_height() const;  // rows the messages take above the status bar (0 without any)
    void help_overlay();

    AppState& app_;
    std::vector<std::unique_ptr<Screen>> screens_;
    std::size_t current_ = 0;
    bool help_ = false;
    bool was_lost_ = false;        // the status bar's input was lost at the last frame
    double rejoined_at_s_ = -1e9;  // when it came back (the bar says so for kRejoinedShownS)
};

// A device chooser for the screens (Settings, Ensemble): the devices with
// inputs (or outputs), listed again every few seconds, shown in a combo with
// "system default" first; show_channels adds each one's channel count.
class DevicePicker {
public:
    // Returns true and sets `chosen` ("" = the system default) when one is picked.
    bool combo(AppState& app, const char* id, const std::string& current, const std::string& shown, bool input,
               bool show_channels, std::string& chosen);

private:
    std::vector<audio::DeviceInfo> devices_;
    double listed_at_s_ = -1e9;
};

// The hearing caution's text (the banner and the Settings screen).
const char* caution_text();

// Height of the caution banner and widths of shared widgets follow this unit:
// the body font's pixel size.
float ui_unit();

}  // namespace beatless::ui
