// beatless-bench section "review-screen": the Review screen drawing a ten-minute take (ui/screens/screen_review.h),
// the whole take in view and zoomed to 10 s, at 1280x800: thread CPU time per frame to build it in ImGui and
// rasterize it. Bar: median under 4 ms per frame (the issue's).
#include "audio/soundfile.h"
#include "tests/bench/bench.h"
#include "tests/mix_signals.h"
#include "ui/render/imgui_host.h"
#include "ui/render/raster.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/screen_review.h"
#include "ui/screens/widgets.h"
#include "ui/session/app_state.h"

#include <stdlib.h>
#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <string>
#include <vector>

namespace {

using namespace beatless;
using namespace beatless::testsig;

void run(bench::Context& ctx) {
    const double minutes = ctx.quick ? 2.0 : 10.0;
    std::string tmpl = (std::filesystem::temp_directory_path() / "beatless-bench-XXXXXX").string();
    if (!mkdtemp(tmpl.data())) return;
    const std::string dir = tmpl;
    setenv("BEATLESS_HOME", dir.c_str(), 1);  // an empty data folder: no takes listed besides
    const std::string path = dir + "/long.wav";
    {
        const Take take = drone_and_voice(44100.0, 110.0, tritone_notes(), 59);
        audio::SoundWriter w(path, 44100.0, 1, audio::SampleFormat::pcm16);
        const double take_s = static_cast<double>(take.samples.size()) / 44100.0;
        for (double t = 0.0; t < minutes * 60.0; t += take_s) w.write(take.samples);
        w.close();
    }
    ui::Settings settings;
    settings.caution_acknowledged = true;
    for (const double span_s : {0.0, 10.0}) {
        ui::AppOptions o;
        o.simulated = true;
        o.no_input = true;
        o.save_settings = false;
        o.take = path;
        o.review_note = 40;
        if (span_s > 0.0) o.review_span_s = span_s;
        ui::AppState app(settings, dir + "/never.toml", o);
        app.start();
        ui::HostConfig hc;
        hc.width_px = 1280;
        hc.height_px = 800;
        ui::ImGuiHost host(hc);
        ui::Rasterizer raster;
        ui::PixelBuffer buf;
        buf.resize(1280, 800);
        auto screen = ui::make_review_screen();
        const int frames = ctx.quick ? 30 : 200;
        std::vector<double> ms;
        const float dt = 1.0f / 60.0f;
        for (int f = -3; f < frames; ++f) {  // the first frame opens and analyses the take: not timed
            const double t0 = bench::thread_cpu_s();
            host.new_frame(dt, 1280, 800);
            app.update(dt);
            const float u = ui::ui_unit();
            const float top = std::round(2.3f * u), status_h = std::round(1.9f * u);
            screen->build(app, ui::ScreenArea{ImVec2(0, top), ImVec2(1280, 800 - top - status_h)}, dt);
            ImDrawData& data = host.render();
            buf.clear(ui::palette::kBackground);
            raster.draw(data, buf);
            if (f >= 0) ms.push_back(1e3 * (bench::thread_cpu_s() - t0));
        }
        const ui::ReviewView& v = *ui::review_view(*screen);
        const double med = bench::percentile(ms, 50);
        std::printf(
            "  %.0f-minute take, %s: build + raster median %.2f ms, p95 %.2f ms (%zu notes marked)   bar "
            "median < 4 ms: %s\n",
            minutes, span_s > 0.0 ? "zoomed to 10 s" : "whole take in view", med, bench::percentile(ms, 95),
            v.marks.size(), med < 4.0 ? "PASS" : "FAIL");
        app.shutdown();
    }
    unsetenv("BEATLESS_HOME");
    std::error_code ec;
    std::filesystem::remove_all(dir, ec);
}

}  // namespace

BEATLESS_BENCH_SECTION("review-screen", "the Review screen drawing a ten-minute take at 1280x800 (build + raster)",
                       run);
