// Window — see window.h.
//
// Index
//   [glfw]     init, errors, the window
//   [input]    GLFW callbacks into ImGuiIO (ImGui 1.86 key map API)
//   [texture]  the OpenGL 1.1 upload and the full-window quad
//   [loop]     run_window
#include "ui/render/window.h"

#include "ui/render/render_error.h"

#include <GLFW/glfw3.h>

#include <algorithm>
#include <array>
#include <cfloat>
#include <cstdlib>
#include <ctime>
#include <vector>

namespace beatless::ui {

namespace {

// ---------------------------------------------------------------------------
// [SECTION] Glfw
// ---------------------------------------------------------------------------

std::string& glfw_error() {
    static std::string text;
    return text;
}
void on_glfw_error(int, const char* description) {
    glfw_error() = description != nullptr ? description : "unknown error";
}

struct GlfwSession {
    GlfwSession() {
        glfwSetErrorCallback(on_glfw_error);
        if (glfwInit() == GLFW_TRUE) return;
        const char* display = std::getenv("DISPLAY");
        const char* wayland = std::getenv("WAYLAND_DISPLAY");
        if ((display == nullptr || *display == '\0') && (wayland == nullptr || *wayland == '\0'))
            throw RenderError("no display: set DISPLAY or use `beatless snapshot` to render without a window");
        throw RenderError(std::string("display '") + (display != nullptr ? display : wayland) +
                          "': cannot be opened (" + glfw_error() +
                          "); use `beatless snapshot` to render without a window");
    }
    ~GlfwSession() { glfwTerminate(); }
    GlfwSession(const GlfwSession&) = delete;
    GlfwSession& operator=(const GlfwSession&) = delete;
};

double cpu_s() {
    timespec ts{};
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

GLFWwindow*& running_window() {  // the window of the run_window() in progress (one at a time)
    static GLFWwindow* w = nullptr;
    return w;
}

// ---------------------------------------------------------------------------
// [SECTION] Input
// ---------------------------------------------------------------------------

struct InputState {
    ImGuiHost* host = nullptr;
    std::array<bool, ImGuiMouseButton_COUNT> pressed_this_frame{};  // clicks shorter than a frame still count
};

InputState* input_of(GLFWwindow* w) { return static_cast<InputState*>(glfwGetWindowUserPointer(w)); }

// The ImGuiIO of the window's host, or null while the window is being torn down.
ImGuiIO* io_of(GLFWwindow* w) {
    InputState* in = input_of(w);
    if (in == nullptr || in->host == nullptr) return nullptr;
    in->host->make_current();
    return &ImGui::GetIO();
}

void on_key(GLFWwindow* w, int key, int, int action, int) {
    ImGuiIO* iop = io_of(w);
    if (iop == nullptr) return;
    ImGuiIO& io = *iop;
    if (key >= 0 && key < static_cast<int>(IM_ARRAYSIZE(io.KeysDown))) io.KeysDown[key] = action != GLFW_RELEASE;
    io.KeyCtrl = io.KeysDown[GLFW_KEY_LEFT_CONTROL] || io.KeysDown[GLFW_KEY_RIGHT_CONTROL];
    io.KeyShift = io.KeysDown[GLFW_KEY_LEFT_SHIFT] || io.KeysDown[GLFW_KEY_RIGHT_SHIFT];
    io.KeyAlt = io.KeysDown[GLFW_KEY_LEFT_ALT] || io.KeysDown[GLFW_KEY_RIGHT_ALT];
    io.KeySuper = io.KeysDown[GLFW_KEY_LEFT_SUPER] || io.KeysDown[GLFW_KEY_RIGHT_SUPER];
}

void on_char(GLFWwindow* w, unsigned int c) {
    if (ImGuiIO* io = io_of(w)) io->AddInputCharacter(c);
}

void on_mouse_button(GLFWwindow* w, int button, int action, int) {
    InputState* in = input_of(w);
    if (in != nullptr && action == GLFW_PRESS && button >= 0 && button < ImGuiMouseButton_COUNT)
        in->pressed_this_frame[static_cast<std::size_t>(button)] = true;
}

void on_scroll(GLFWwindow* w, double dx, double dy) {
    if (ImGuiIO* io = io_of(w)) {
        io->MouseWheelH += static_cast<float>(dx);
        io->MouseWheel += static_cast<float>(dy);
    }
}

void on_focus(GLFWwindow* w, int focused) {
    if (ImGuiIO* io = io_of(w)) io->AddFocusEvent(focused != 0);
}

void set_key_map(ImGuiIO& io) {
    io.BackendPlatformName = "beatless-glfw";
    io.KeyMap[ImGuiKey_Tab] = GLFW_KEY_TAB;
    io.KeyMap[ImGuiKey_LeftArrow] = GLFW_KEY_LEFT;
    io.KeyMap[ImGuiKey_RightArrow] = GLFW_KEY_RIGHT;
    io.KeyMap[ImGuiKey_UpArrow] = GLFW_KEY_UP;
    io.KeyMap[ImGuiKey_DownArrow] = GLFW_KEY_DOWN;
    io.KeyMap[ImGuiKey_PageUp] = GLFW_KEY_PAGE_UP;
    io.KeyMap[ImGuiKey_PageDown] = GLFW_KEY_PAGE_DOWN;
    io.KeyMap[ImGuiKey_Home] = GLFW_KEY_HOME;
    io.KeyMap[ImGuiKey_End] = GLFW_KEY_END;
    io.KeyMap[ImGuiKey_Insert] = GLFW_KEY_INSERT;
    io.KeyMap[ImGuiKey_Delete] = GLFW_KEY_DELETE;
    io.KeyMap[ImGuiKey_Backspace] = GLFW_KEY_BACKSPACE;
    io.KeyMap[ImGuiKey_Space] = GLFW_KEY_SPACE;
    io.KeyMap[ImGuiKey_Enter] = GLFW_KEY_ENTER;
    io.KeyMap[ImGuiKey_Escape] = GLFW_KEY_ESCAPE;
    io.KeyMap[ImGuiKey_KeyPadEnter] = GLFW_KEY_KP_ENTER;
    io.KeyMap[ImGuiKey_A] = GLFW_KEY_A;
    io.KeyMap[ImGuiKey_C] = GLFW_KEY_C;
    io.KeyMap[ImGuiKey_V] = GLFW_KEY_V;
    io.KeyMap[ImGuiKey_X] = GLFW_KEY_X;
    io.KeyMap[ImGuiKey_Y] = GLFW_KEY_Y;
    io.KeyMap[ImGuiKey_Z] = GLFW_KEY_Z;
}

void set_clipboard(void* window, const char* text) { glfwSetClipboardString(static_cast<GLFWwindow*>(window), text); }
const char* get_clipboard(void* window) { return glfwGetClipboardString(static_cast<GLFWwindow*>(window)); }

// Mouse state polled once per frame, in framebuffer pixels (ImGui's units here).
void poll_mouse(GLFWwindow* w, InputState& in, ImGuiIO& io, int win_w, int fb_w, int win_h, int fb_h) {
    const bool inside = glfwGetWindowAttrib(w, GLFW_HOVERED) != 0 || glfwGetWindowAttrib(w, GLFW_FOCUSED) != 0;
    if (inside) {
        double x = 0.0, y = 0.0;
        glfwGetCursorPos(w, &x, &y);
        const double sx = win_w > 0 ? static_cast<double>(fb_w) / win_w : 1.0;
        const double sy = win_h > 0 ? static_cast<double>(fb_h) / win_h : 1.0;
        io.MousePos = ImVec2(static_cast<float>(x * sx), static_cast<float>(y * sy));
    } else {
        io.MousePos = ImVec2(-FLT_MAX, -FLT_MAX);
    }
    for (int b = 0; b < ImGuiMouseButton_COUNT; ++b) {
        auto& pressed = in.pressed_this_frame[static_cast<std::size_t>(b)];
        io.MouseDown[b] = pressed || glfwGetMouseButton(w, b) == GLFW_PRESS;
        pressed = false;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Texture
// ---------------------------------------------------------------------------

int pow2_at_least(int n) {
    int p = 1;
    while (p < n) p <<= 1;
    return p;
}

class Screen {
public:
    Screen() {
        glGenTextures(1, &tex_);
        glBindTexture(GL_TEXTURE_2D, tex_);
        glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_MIN_FILTER, GL_NEAREST);
        glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_MAG_FILTER, GL_NEAREST);
        glGetIntegerv(GL_MAX_TEXTURE_SIZE, &max_size_);
    }
    ~Screen() { glDeleteTextures(1, &tex_); }
    Screen(const Screen&) = delete;
    Screen& operator=(const Screen&) = delete;

    // Uploads the buffer and draws it over the whole framebuffer.
    void show(const PixelBuffer& buf) {
        const int w = buf.width_px, h = buf.height_px;
        glBindTexture(GL_TEXTURE_2D, tex_);
        if (w > tex_w_ || h > tex_h_) {
            tex_w_ = std::max(tex_w_, pow2_at_least(w));
            tex_h_ = std::max(tex_h_, pow2_at_least(h));
            if (tex_w_ > max_size_ || tex_h_ > max_size_)
                throw RenderError("window " + std::to_string(w) + "x" + std::to_string(h) +
                                  ": larger than OpenGL's texture limit " + std::to_string(max_size_));
            glTexImage2D(GL_TEXTURE_2D, 0, GL_RGBA8, tex_w_, tex_h_, 0, GL_RGBA, GL_UNSIGNED_BYTE, nullptr);
        }
        glPixelStorei(GL_UNPACK_ALIGNMENT, 4);
        glTexSubImage2D(GL_TEXTURE_2D, 0, 0, 0, w, h, GL_RGBA, GL_UNSIGNED_BYTE, buf.pixels.data());

        glViewport(0, 0, w, h);
        glMatrixMode(GL_PROJECTION);
        glLoadIdentity();
        glOrtho(0.0, w, h, 0.0, -1.0, 1.0);
        glMatrixMode(GL_MODELVIEW);
        glLoadIdentity();
        glDisable(GL_BLEND);
        glDisable(GL_DEPTH_TEST);
        glDisable(GL_LIGHTING);
        glEnable(GL_TEXTURE_2D);
        glTexEnvi(GL_TEXTURE_ENV, GL_TEXTURE_ENV_MODE, GL_REPLACE);
        const float s = static_cast<float>(w) / static_cast<float>(tex_w_);
        const float t = static_cast<float>(h) / static_cast<float>(tex_h_);
        glBegin(GL_QUADS);
        glTexCoord2f(0.0f, 0.0f);
        glVertex2f(0.0f, 0.0f);
        glTexCoord2f(s, 0.0f);
        glVertex2f(static_cast<float>(w), 0.0f);
        glTexCoord2f(s, t);
        glVertex2f(static_cast<float>(w), static_cast<float>(h));
        glTexCoord2f(0.0f, t);
        glVertex2f(0.0f, static_cast<float>(h));
        glEnd();
    }

    // Pixels whose RGB on the back buffer differs from the buffer's.
    static long mismatches(const PixelBuffer& buf) {
        const int w = buf.width_px, h = buf.height_px;
        std::vector<std::uint32_t> back(static_cast<std::size_t>(w) * static_cast<std::size_t>(h));
        glFinish();
        glReadBuffer(GL_BACK);
        glPixelStorei(GL_PACK_ALIGNMENT, 4);
        glReadPixels(0, 0, w, h, GL_RGBA, GL_UNSIGNED_BYTE, back.data());
        long bad = 0;
        for (int y = 0; y < h; ++y)
            for (int x = 0; x < w; ++x) {
                const std::uint32_t gl = back[static_cast<std::size_t>(h - 1 - y) * static_cast<std::size_t>(w) +
                                              static_cast<std::size_t>(x)];
                if (((gl ^ buf.at(x, y)) & 0x00FFFFFFu) != 0) ++bad;
            }
        return bad;
    }

private:
    GLuint tex_ = 0;
    int tex_w_ = 0, tex_h_ = 0;
    GLint max_size_ = 0;
};

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Loop
// ---------------------------------------------------------------------------

WindowReport run_window(const WindowConfig& config, const std::function<void(float dt_s)>& build_frame) {
    if (config.width <= 0 || config.height <= 0)
        throw RenderError("window size " + std::to_string(config.width) + "x" + std::to_string(config.height) +
                          ": must be positive");
    const GlfwSession glfw;
    glfwWindowHint(GLFW_CLIENT_API, GLFW_OPENGL_API);
    glfwWindowHint(GLFW_CONTEXT_VERSION_MAJOR, 1);
    glfwWindowHint(GLFW_CONTEXT_VERSION_MINOR, 1);
    glfwWindowHint(GLFW_SCALE_TO_MONITOR, GLFW_TRUE);
    glfwWindowHint(GLFW_DOUBLEBUFFER, GLFW_TRUE);
    GLFWwindow* win = glfwCreateWindow(config.width, config.height, config.title.c_str(), nullptr, nullptr);
    if (win == nullptr) throw RenderError("window '" + config.title + "': cannot be opened (" + glfw_error() + ")");
    struct WindowGuard {
        GLFWwindow* w;
        ~WindowGuard() { glfwDestroyWindow(w); }
    } window_guard{win};
    glfwMakeContextCurrent(win);
    glfwSwapInterval(config.vsync ? 1 : 0);

    float xscale = 1.0f, yscale = 1.0f;
    glfwGetWindowContentScale(win, &xscale, &yscale);
    int fb_w = 0, fb_h = 0;
    glfwGetFramebufferSize(win, &fb_w, &fb_h);

    WindowReport report;
    HostConfig hc = config.host;
    hc.width_px = fb_w;
    hc.height_px = fb_h;
    hc.dpi_scale = std::clamp(xscale > 0.0f ? xscale : 1.0f, 0.5f, 8.0f);
    report.dpi_scale = hc.dpi_scale;
    ImGuiHost host(hc);

    InputState input;
    input.host = &host;
    glfwSetWindowUserPointer(win, &input);
    struct UserPointerGuard {  // callbacks during teardown find no state
        GLFWwindow* w;
        ~UserPointerGuard() {
            glfwSetWindowUserPointer(w, nullptr);
            running_window() = nullptr;
        }
    } pointer_guard{win};
    running_window() = win;
    {
        ImGuiIO& io = ImGui::GetIO();
        set_key_map(io);
        io.SetClipboardTextFn = set_clipboard;
        io.GetClipboardTextFn = get_clipboard;
        io.ClipboardUserData = win;
    }
    glfwSetKeyCallback(win, on_key);
    glfwSetCharCallback(win, on_char);
    glfwSetMouseButtonCallback(win, on_mouse_button);
    glfwSetScrollCallback(win, on_scroll);
    glfwSetWindowFocusCallback(win, on_focus);

    Screen screen;
    Rasterizer raster;
    PixelBuffer buffer;
    const double t_start = glfwGetTime();
    double t_prev = t_start;
    while (glfwWindowShouldClose(win) == GLFW_FALSE && (config.max_frames <= 0 || report.frames < config.max_frames)) {
        glfwPollEvents();
        glfwGetFramebufferSize(win, &fb_w, &fb_h);
        if (fb_w <= 0 || fb_h <= 0) {  // minimised
            glfwWaitEventsTimeout(0.1);
            t_prev = glfwGetTime();
            continue;
        }
        int win_w = 0, win_h = 0;
        glfwGetWindowSize(win, &win_w, &win_h);
        const double now = glfwGetTime();
        const float dt_s = report.frames == 0 ? 1.0f / 60.0f : static_cast<float>(now - t_prev);
        t_prev = now;

        const double c0 = cpu_s();
        host.make_current();
        poll_mouse(win, input, ImGui::GetIO(), win_w, fb_w, win_h, fb_h);
        host.new_frame(dt_s, fb_w, fb_h);
        if (build_frame) build_frame(dt_s);
        ImDrawData& data = host.render();
        const double c1 = cpu_s();
        if (buffer.width_px != fb_w || buffer.height_px != fb_h) buffer.resize(fb_w, fb_h);
        buffer.clear(config.clear_color);
        raster.draw(data, buffer);
        const double c2 = cpu_s();
        screen.show(buffer);
        const bool last = config.max_frames > 0 && report.frames + 1 == config.max_frames;
        if (config.check_upload && last) report.mismatched_pixels = Screen::mismatches(buffer);
        glfwSwapBuffers(win);
        const double c3 = cpu_s();
        report.build_cpu_s += c1 - c0;
        report.raster_cpu_s += c2 - c1;
        report.show_cpu_s += c3 - c2;
        ++report.frames;
        report.width_px = fb_w;
        report.height_px = fb_h;
    }
    report.wall_s = glfwGetTime() - t_start;
    return report;
}

void set_window_size(int width, int height) {
    if (running_window() != nullptr && width > 0 && height > 0) glfwSetWindowSize(running_window(), width, height);
}

int run_window(const std::string& title, int width, int height, const std::function<void(float dt_s)>& build_frame,
               int max_frames) {
    WindowConfig config;
    config.title = title;
    config.width = width;
    config.height = height;
    config.max_frames = max_frames;
    (void)run_window(config, build_frame);
    return 0;
}

}  // namespace beatless::ui
