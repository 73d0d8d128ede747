// The pieces both beatless programs share (entry.h).
#include "ui/commands/entry.h"

#include "pitch/base/error.h"
#include "ui/render/render_error.h"
#include "ui/session/usage_error.h"

#include <cstdio>
#include <exception>

namespace beatless::ui {

void setup_app(CLI::App& app) {
    app.set_version_flag("--version", "beatless 0.1.0");
    app.require_subcommand(0, 1);
}

void register_file_commands(CLI::App& app, Runner& run) {
    register_ratio(app, run);
    register_tone(app, run);
    register_track(app, run);
    register_chord(app, run);
    register_drift(app, run);
    register_history(app, run);
    register_analyze(app, run);
    register_tuning(app, run);
}

int run_guarded(const Runner& run) {
    try {
        return run();
    } catch (const UsageError& e) {
        std::fprintf(stderr, "beatless: %s\n", e.what());
        return 2;
    } catch (const Error& e) {
        std::fprintf(stderr, "beatless: %s\n", e.what());
        return 1;
    } catch (const RenderError& e) {
        std::fprintf(stderr, "beatless: %s\n", e.what());
        return 1;
    } catch (const std::exception& e) {
        std::fprintf(stderr, "beatless: unexpected failure: %s\n", e.what());
        return 1;
    }
}

}  // namespace beatless::ui
