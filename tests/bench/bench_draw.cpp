// Benchmark section `draw`: CPU rasterizer time per frame for the busy test
// screen (tests/demo_screen.h) at 1280x800 and 1920x1080, as thread CPU time
// (clear + rasterize; building the frame in ImGui is timed apart).
// Bar: median <= 4 ms per frame at 1280x800 on one core.
#include "tests/bench/bench.h"
#include "tests/demo_screen.h"
#include "ui/render/imgui_host.h"
#include "ui/render/raster.h"

#include <cstdio>
#include <vector>

namespace {

using namespace beatless;

struct Size {
    int w, h;
};

void run_draw(bench::Context& ctx) {
    const int frames = ctx.quick ? 30 : 300;
    const Size sizes[] = {{1280, 800}, {1920, 1080}};
    std::printf("%-10s %8s %8s %8s %8s %10s %10s %9s %9s\n", "size", "best", "median", "p95", "build", "rects",
                "triangles", "vertices", "bar");
    for (const Size& s : sizes) {
        ui::HostConfig hc;
        hc.width_px = s.w;
        hc.height_px = s.h;
        ui::ImGuiHost host(hc);
        ui::Rasterizer raster;
        ui::PixelBuffer buf;
        buf.resize(s.w, s.h);
        testing::DemoScreen demo(3000);
        std::vector<double> raster_ms, build_ms;
        raster_ms.reserve(static_cast<std::size_t>(frames));
        build_ms.reserve(static_cast<std::size_t>(frames));
        int vertices = 0;
        const float dt = 1.0f / 60.0f;
        for (int f = -5; f < frames; ++f) {  // 5 warm-up frames
            const double t0 = bench::thread_cpu_s();
            host.new_frame(dt, s.w, s.h);
            demo.build(10.0f + static_cast<float>(f) * dt);
            ImDrawData& data = host.render();
            const double t1 = bench::thread_cpu_s();
            raster.reset_stats();
            buf.clear(ui::rgba(24, 26, 30));
            raster.draw(data, buf);
            const double t2 = bench::thread_cpu_s();
            if (f < 0) continue;
            build_ms.push_back(1e3 * (t1 - t0));
            raster_ms.push_back(1e3 * (t2 - t1));
            vertices = data.TotalVtxCount;
        }
        const double med = bench::percentile(raster_ms, 50), p95 = bench::percentile(raster_ms, 95);
        char name[32];
        std::snprintf(name, sizeof name, "%dx%d", s.w, s.h);
        const bool barred = s.w == 1280;
        std::printf("%-10s %6.2fms %6.2fms %6.2fms %6.2fms %10zu %10zu %9d %9s\n", name,
                    bench::percentile(raster_ms, 0), med, p95, bench::percentile(build_ms, 50), raster.stats().rects,
                    raster.stats().triangles, vertices, barred ? (med <= 4.0 ? "<=4 ms ok" : ">4 ms FAIL") : "-");
    }
    std::printf(
        "best/median/p95: clear + rasterize per frame (thread CPU); build: ImGui frame build, median;\n"
        "rects: axis-aligned quads filled as spans; triangles: general path; bar: median <= 4 ms at 1280x800\n");
}

BEATLESS_BENCH_SECTION("draw", "CPU rasterizer: busy tuner-like screen at 1280x800 and 1920x1080", run_draw);

}  // namespace
