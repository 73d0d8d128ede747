// beatless-bench section "review-screen": the Review screen drawing a ten-minute take (ui/screens/screen_review.h),
// the whole take in view and zoomed to 10 s, at 1280x800: thread CPU time per frame to build it in ImGui and
// rasterize it; and the wall time per frame while three such takes of the list are read on the worker thread. Bar:
// median under 4 ms per frame (the issue's).
#include "audio/soundfile.h"
#include "audio/take_writer.h"
#include "tests/bench/bench.h"
#include "tests/mix_signals.h"
#include "ui/render/imgui_host.h"
#include "ui/render/raster.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/screen_review.h"
#include "ui/screens/widgets.h"
#include "ui/session/app_state.h"
#include "ui/session/take_file.h"

#include <stdlib.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <string>
#include <thread>
#include <vector>

namespace {

using namespace beatless;
using namespace beatless::testsig;

// A 1280x800 Review screen drawn into the rasterizer, one frame at a time.
struct Frames {
    ui::ImGuiHost host{[] {
        ui::HostConfig hc;
        hc.width_px = 1280;
        hc.height_px = 800;
        return hc;
    }()};
    ui::Rasterizer raster;
    ui::PixelBuffer buf;
    std::unique_ptr<ui::Screen> screen = ui::make_review_screen();
    Frames() { buf.resize(1280, 800); }
    void draw(ui::AppState& app) {
        const float dt = 1.0f / 60.0f;
        host.new_frame(dt, 1280, 800);
        app.update(dt);
        const float u = ui::ui_unit();
        const float top = std::round(2.3f * u), status_h = std::round(1.9f * u);
        screen->build(app, ui::ScreenArea{ImVec2(0, top), ImVec2(1280, 800 - top - status_h)}, dt);
        ImDrawData& data = host.render();
        buf.clear(ui::palette::kBackground);
        raster.draw(data, buf);
    }
};

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
        Frames fr;
        const int frames = ctx.quick ? 30 : 200;
        std::vector<double> ms;
        for (int f = -3; f < frames; ++f) {  // the first frame opens and analyses the take: not timed
            const double t0 = bench::thread_cpu_s();
            fr.draw(app);
            if (f >= 0) ms.push_back(1e3 * (bench::thread_cpu_s() - t0));
        }
        const ui::ReviewView& v = *ui::review_view(*fr.screen);
        const double med = bench::percentile(ms, 50);
        std::printf(
            "  %.0f-minute take, %s: build + raster median %.2f ms, p95 %.2f ms (%zu notes marked)   bar "
            "median < 4 ms: %s\n",
            minutes, span_s > 0.0 ? "zoomed to 10 s" : "whole take in view", med, bench::percentile(ms, 95),
            v.marks.size(), med < 4.0 ? "PASS" : "FAIL");
        app.shutdown();
    }
    // The list loading: three ten-minute takes in the data folder, nothing analysed yet, in real time (the worker
    // reads them on its own thread). Wall time per frame on the UI thread while the list still says "reading".
    {
        const std::filesystem::path takes = ui::takes_dir();
        std::filesystem::create_directories(takes);
        const std::vector<float> whole = audio::SoundReader::read_all(path);
        for (const char* stem : {"2026-12-01_090000", "2026-12-02_090000", "2026-12-03_090000"}) {
            ui::TakeInfo info;
            info.audio_path = takes / (std::string(stem) + ".flac");
            {
                audio::TakeWriter w(info.audio_path.string(), 44100.0, 1);
                w.write(whole);
                w.close();
            }
            info.sidecar_path = ui::take_sidecar_path(info.audio_path);
            info.rate_hz = 44100.0;
            info.root_hz = 110.0;
            info.root = "A2";
            info.targets = "tritones";
            info.duration_s = minutes * 60.0;
            info.complete = true;
            ui::write_take_sidecar(info);
        }
        ui::AppOptions o;
        o.no_input = true;
        o.save_settings = false;
        ui::AppState app(settings, dir + "/never.toml", o);
        app.start();
        Frames fr;
        std::vector<double> ms, cpu_ms;
        const auto start = std::chrono::steady_clock::now();
        bool loading = true;
        while (loading && std::chrono::steady_clock::now() - start < std::chrono::seconds(120)) {
            const auto t0 = std::chrono::steady_clock::now();
            const double c0 = bench::thread_cpu_s();
            fr.draw(app);
            ms.push_back(1e3 * std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
            cpu_ms.push_back(1e3 * (bench::thread_cpu_s() - c0));
            const ui::ReviewView& v = *ui::review_view(*fr.screen);
            loading = v.reading;
            for (const std::string& row : v.takes) loading = loading || row.find("reading") != std::string::npos;
            std::this_thread::sleep_for(std::chrono::milliseconds(16));
        }
        // Bars: the UI thread's CPU per frame, median under 4 ms (the issue's), and no frame that did the analysis
        // itself (one 2-minute take costs ~0.25 s of CPU, so any frame over 20 ms would show it). Wall time is given
        // beside it: on a shared machine it includes the time the thread waited for a core.
        const double cmed = bench::percentile(cpu_ms, 50), cworst = *std::max_element(cpu_ms.begin(), cpu_ms.end());
        double load = NAN;
        if (std::FILE* f = std::fopen("/proc/loadavg", "r")) {
            if (std::fscanf(f, "%lf", &load) != 1) load = NAN;
            std::fclose(f);
        }
        std::printf(
            "  three %.0f-minute takes listed, none known: %zu frames while reading (%.1f s); UI thread CPU per "
            "frame median %.2f ms, worst %.2f ms; wall median %.2f ms, p95 %.2f ms (load average %.1f)   bar CPU "
            "median < 4 ms and worst < 20 ms: %s\n",
            minutes, ms.size(), std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count(), cmed,
            cworst, bench::percentile(ms, 50), bench::percentile(ms, 95), load,
            cmed < 4.0 && cworst < 20.0 ? "PASS" : "FAIL");
        app.shutdown();
    }
    unsetenv("BEATLESS_HOME");
    std::error_code ec;
    std::filesystem::remove_all(dir, ec);
}

}  // namespace

BEATLESS_BENCH_SECTION("review-screen", "the Review screen drawing a ten-minute take at 1280x800 (build + raster)",
                       run);
