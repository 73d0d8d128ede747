// Window — shows the rasterizer's pixels in a GLFW window and feeds GLFW's input to ImGui.
// Method: per frame, poll events into ImGui, build and rasterize the frame on the CPU, and show it as one textured
// quad with OpenGL 1.1 calls only. What it supports and not: DEVELOPERS.md, "Methods in detail".
// Thread: the UI thread. Allocates: yes (never on an audio path).
#pragma once

#include "ui/render/imgui_host.h"

#include <functional>
#include <string>

namespace beatless::ui {

struct WindowConfig {
    std::string title = "Beatless";
    int width = 1280;  // window size in screen coordinates (scaled to the monitor's content scale)
    int height = 800;
    int max_frames = 0;         // close after this many frames; 0: run until the window is closed
    bool vsync = true;          // wait for the display's refresh between frames
    bool check_upload = false;  // read the last frame back from OpenGL and compare it with the buffer
    std::uint32_t clear_color = rgba(24, 26, 30);  // behind every frame
    HostConfig host;  // fonts and sizes; width, height and dpi_scale are taken from the window
};

struct WindowReport {
    int frames = 0;               // frames shown
    double wall_s = 0.0;          // wall-clock time of the frame loop
    double build_cpu_s = 0.0;     // thread CPU time in build_frame and ImGui
    double raster_cpu_s = 0.0;    // thread CPU time in clear + rasterize
    double show_cpu_s = 0.0;      // thread CPU time in upload, draw and swap
    long mismatched_pixels = -1;  // with check_upload: pixels whose RGB differs on screen; -1 if not checked
    int width_px = 0;             // framebuffer size of the last frame
    int height_px = 0;
    float dpi_scale = 1.0f;  // content scale used for fonts
};

// Opens the window and runs frames until it is closed or max_frames are
// shown; build_frame(dt_s) is called between ImGui::NewFrame and Render with
// the wall-clock time since the previous frame. Throws RenderError when there is
// no display ("no display: set DISPLAY or use `beatless snapshot` to render
// without a window") or no OpenGL window can be made.
WindowReport run_window(const WindowConfig& config, const std::function<void(float dt_s)>& build_frame);

// Asks the window being run to take this size in screen coordinates (call
// from build_frame; the buffer follows on the next frame). Outside
// run_window it does nothing.
void set_window_size(int width, int height);

// The short form: returns 0 once the window has closed.
int run_window(const std::string& title, int width, int height, const std::function<void(float dt_s)>& build_frame,
               int max_frames = 0);

}  // namespace beatless::ui
