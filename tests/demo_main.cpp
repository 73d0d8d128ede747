// beatless-demo — renders the test screen (tests/demo_screen.h) for looking
// at by eye and for the window smoke check. Test tool, not part of the product.
//
//   beatless-demo png OUT.png [WIDTHxHEIGHT] [DPI_SCALE] [T_S]
//   beatless-demo window [FRAMES] [--check] [--no-vsync] [--resize]
//
// `window` opens the GLFW window, shows FRAMES frames (default 120), prints
// frames per second and the CPU split, and with --check compares the last
// frame read back from OpenGL with the rasterizer's buffer (exit 1 if any
// pixel differs); --resize changes the window to 900x600 a third of the way.
#include "pitch/base/error.h"
#include "tests/demo_screen.h"
#include "ui/render/imgui_host.h"
#include "ui/render/png.h"
#include "ui/render/window.h"

#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <string>

using namespace beatless;

namespace {

int usage() {
    std::fprintf(stderr,
                 "usage: beatless-demo png OUT.png [WIDTHxHEIGHT] [DPI_SCALE] [T_S] | window [FRAMES] [--check] "
                 "[--no-vsync] [--resize]\n");
    return 2;
}

int run_png(int argc, char** argv) {
    if (argc < 3) return usage();
    ui::HostConfig hc;
    if (argc > 3 && std::sscanf(argv[3], "%dx%d", &hc.width_px, &hc.height_px) != 2) return usage();
    if (argc > 4) hc.dpi_scale = std::strtof(argv[4], nullptr);
    const float t_s = argc > 5 ? std::strtof(argv[5], nullptr) : 12.0f;
    ui::ImGuiHost host(hc);
    ui::Rasterizer raster;
    ui::PixelBuffer buf;
    testing::DemoScreen demo;
    // Two frames: ImGui settles window sizes and table columns on the first.
    for (int i = 0; i < 2; ++i) ui::render_offscreen(host, raster, buf, 1.0f / 60.0f, [&] { demo.build(t_s); });
    ui::write_png(argv[2], buf);
    std::printf("%s: %dx%d, %zu rects, %zu triangles\n", argv[2], buf.width_px, buf.height_px, raster.stats().rects / 2,
                raster.stats().triangles / 2);
    return 0;
}

int run_win(int argc, char** argv) {
    ui::WindowConfig wc;
    bool resize = false;
    wc.title = "beatless demo";
    wc.max_frames = 120;
    for (int i = 2; i < argc; ++i) {
        if (std::strcmp(argv[i], "--check") == 0)
            wc.check_upload = true;
        else if (std::strcmp(argv[i], "--no-vsync") == 0)
            wc.vsync = false;
        else if (std::strcmp(argv[i], "--resize") == 0)
            resize = true;
        else
            wc.max_frames = std::atoi(argv[i]);
    }
    testing::DemoScreen demo;
    float t_s = 0.0f;
    int frame = 0;
    const ui::WindowReport r = ui::run_window(wc, [&](float dt_s) {
        t_s += dt_s;
        if (resize && frame++ == wc.max_frames / 3) ui::set_window_size(900, 600);
        demo.build(t_s);
    });
    const double n = r.frames > 0 ? r.frames : 1;
    std::printf(
        "window %dx%d (scale %.2f): %d frames in %.2f s wall = %.1f frames/s; CPU per frame: build %.2f ms, "
        "rasterize %.2f ms, upload+swap %.2f ms\n",
        r.width_px, r.height_px, static_cast<double>(r.dpi_scale), r.frames, r.wall_s,
        r.wall_s > 0 ? r.frames / r.wall_s : 0.0, 1e3 * r.build_cpu_s / n, 1e3 * r.raster_cpu_s / n,
        1e3 * r.show_cpu_s / n);
    if (wc.check_upload) {
        std::printf("last frame read back from OpenGL: %ld of %d pixels differ\n", r.mismatched_pixels,
                    r.width_px * r.height_px);
        if (r.mismatched_pixels != 0) return 1;
    }
    return 0;
}

}  // namespace

int main(int argc, char** argv) {
    if (argc < 2) return usage();
    try {
        if (std::strcmp(argv[1], "png") == 0) return run_png(argc, argv);
        if (std::strcmp(argv[1], "window") == 0) return run_win(argc, argv);
        return usage();
    } catch (const Error& e) {
        std::fprintf(stderr, "beatless-demo: %s\n", e.what());
        return 1;
    }
}
