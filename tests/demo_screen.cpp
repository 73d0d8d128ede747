// Demo screen — see demo_screen.h. The scenario is invented: a player
// holding a septimal tritone (7/5) over a D drone with a slow vibrato.
#include "tests/demo_screen.h"

#include <cmath>
#include <cstdio>

namespace beatless::testing {

namespace {

constexpr float kPi = 3.14159265358979f;

// Deviation in cents of the invented performance at time t.
float demo_dev_cents(float t_s) {
    return 6.0f * std::sin(2.0f * kPi * 5.2f * t_s) + 9.0f * std::sin(0.37f * t_s) + 2.5f * std::sin(1.9f * t_s + 1.0f);
}

constexpr ImGuiWindowFlags kPanel = ImGuiWindowFlags_NoMove | ImGuiWindowFlags_NoResize | ImGuiWindowFlags_NoCollapse |
                                    ImGuiWindowFlags_NoSavedSettings;

void place(float x, float y, float w, float h) {
    ImGui::SetNextWindowPos(ImVec2(x, y));
    ImGui::SetNextWindowSize(ImVec2(w, h));
}

}  // namespace

DemoScreen::DemoScreen(int trace_points)
    : trace_(static_cast<std::size_t>(trace_points > 1 ? trace_points : 2)), plot_(120) {}

void DemoScreen::build(float t_s) {
    const ui::ImGuiHost& host = *ui::ImGuiHost::current();
    const ImVec2 disp = ImGui::GetIO().DisplaySize;
    const float W = disp.x, H = disp.y;
    const float pad = 8.0f * host.config().dpi_scale;
    const float dev = demo_dev_cents(t_s);
    char buf[96];

    // --- The band: a tick every cent, labels every 10 ----------------------
    const float band_h = std::floor(H * 0.2f);
    place(0, 0, W, band_h);
    ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, ImVec2(0, 0));
    ImGui::Begin("band", nullptr, kPanel | ImGuiWindowFlags_NoDecoration);
    {
        ImDrawList* dl = ImGui::GetWindowDrawList();
        const float x0 = pad * 4, x1 = W - pad * 4, yb = band_h - pad * 3;
        const float cx = (x0 + x1) * 0.5f, px_per_cent = (x1 - x0) / 100.0f;
        dl->AddRectFilled(ImVec2(cx - 5 * px_per_cent, pad), ImVec2(cx + 5 * px_per_cent, yb),
                          IM_COL32(40, 90, 60, 255), 6.0f);
        ImGui::PushFont(host.font(ui::FontFace::mono));
        for (int c = -50; c <= 50; ++c) {
            const float x = std::floor(cx + static_cast<float>(c) * px_per_cent) + 0.5f;
            const bool major = c % 10 == 0, mid = c % 5 == 0;
            const float len = major ? band_h * 0.35f : mid ? band_h * 0.22f : band_h * 0.12f;
            dl->AddLine(ImVec2(x, yb - len), ImVec2(x, yb),
                        major ? IM_COL32(230, 230, 230, 255) : IM_COL32(150, 150, 160, 255), major ? 2.0f : 1.0f);
            if (major) {
                std::snprintf(buf, sizeof buf, "%+d", c);
                const ImVec2 ts = ImGui::CalcTextSize(c == 0 ? "0" : buf);
                dl->AddText(ImVec2(std::floor(x - ts.x * 0.5f), yb - len - ts.y - 2), IM_COL32(220, 220, 225, 255),
                            c == 0 ? "0" : buf);
            }
        }
        ImGui::PopFont();
        const float mx = cx + dev * px_per_cent;
        dl->AddTriangleFilled(ImVec2(mx - 12, pad + 2), ImVec2(mx + 12, pad + 2), ImVec2(mx, pad + 26),
                              IM_COL32(255, 190, 60, 255));
        dl->AddLine(ImVec2(mx, pad + 20), ImVec2(mx, yb), IM_COL32(255, 190, 60, 255), 3.0f);
        dl->AddLine(ImVec2(x0, yb + 0.5f), ImVec2(x1, yb + 0.5f), IM_COL32(200, 200, 200, 255), 1.0f);
    }
    ImGui::End();
    ImGui::PopStyleVar();

    // --- The trace: pitch history against target lines ---------------------
    const float trace_w = std::floor(W * 0.64f), trace_h = std::floor((H - band_h) * 0.62f);
    place(0, band_h, trace_w, trace_h);
    ImGui::Begin("Trace", nullptr, kPanel);
    {
        ImDrawList* dl = ImGui::GetWindowDrawList();
        const ImVec2 p0 = ImGui::GetCursorScreenPos();
        const ImVec2 avail = ImGui::GetContentRegionAvail();
        const ImVec2 p1(p0.x + avail.x, p0.y + avail.y);
        dl->AddRectFilled(p0, p1, IM_COL32(16, 18, 22, 255));
        const float cy = (p0.y + p1.y) * 0.5f, px_per_cent = avail.y / 60.0f;
        for (int c = -30; c <= 30; c += 10) {
            const float y = std::floor(cy - static_cast<float>(c) * px_per_cent) + 0.5f;
            dl->AddLine(ImVec2(p0.x, y), ImVec2(p1.x, y),
                        c == 0 ? IM_COL32(90, 200, 120, 255) : IM_COL32(60, 64, 72, 255), c == 0 ? 2.0f : 1.0f);
            std::snprintf(buf, sizeof buf, "%+d c", c);
            dl->AddText(ImVec2(p0.x + 4, c > 0 ? y + 2 : y - ImGui::GetTextLineHeight() - 1),
                        IM_COL32(140, 145, 155, 255), buf);
        }
        const std::size_t n = trace_.size();
        const float span_s = 8.0f, dt = span_s / static_cast<float>(n - 1);
        for (std::size_t i = 0; i < n; ++i) {
            const float ti = t_s - span_s + static_cast<float>(i) * dt;
            const float x = p0.x + avail.x * static_cast<float>(i) / static_cast<float>(n - 1);
            trace_[i] = ImVec2(x, cy - demo_dev_cents(ti) * px_per_cent);
        }
        dl->PushClipRect(p0, p1, true);
        dl->AddPolyline(trace_.data(), static_cast<int>(n), IM_COL32(255, 190, 60, 255), ImDrawFlags_None, 2.0f);
        dl->AddCircleFilled(trace_[n - 1], 6.0f, IM_COL32(255, 230, 160, 255));
        dl->PopClipRect();
    }
    ImGui::End();

    // --- The reading panel: big number, text, widgets ----------------------
    place(trace_w, band_h, W - trace_w, H - band_h);
    ImGui::Begin("Reading", nullptr, kPanel);
    {
        ImGui::PushFont(host.font(ui::FontFace::large));
        std::snprintf(buf, sizeof buf, "%+.1f\xC2\xA2", static_cast<double>(dev));
        ImGui::TextColored(std::fabs(dev) < 5 ? ImVec4(0.5f, 0.9f, 0.6f, 1) : ImVec4(1.0f, 0.75f, 0.3f, 1), "%s", buf);
        ImGui::PopFont();
        ImGui::PushFont(host.font(ui::FontFace::bold));
        ImGui::TextUnformatted("Target 7/5  septimal tritone");
        ImGui::PopFont();
        ImGui::Text("Root D3  146.83 Hz   target 205.56 Hz");
        ImGui::Text("Beat rate %.2f Hz  (partials 5:7)", static_cast<double>(std::fabs(dev) * 0.17f));
        ImGui::Separator();
        ImGui::SliderFloat("Window", &slider_cents_, 1.0f, 25.0f, "%.0f cents");
        ImGui::Checkbox("Drone", &drone_on_);
        ImGui::SameLine();
        ImGui::RadioButton("Low", &voice_, 0);
        ImGui::SameLine();
        ImGui::RadioButton("High", &voice_, 1);
        if (ImGui::Button("Next target")) voice_ = 1 - voice_;
        ImGui::SameLine();
        ImGui::Button("Hold");
        ImGui::ProgressBar(0.5f + 0.5f * std::sin(t_s * 0.5f), ImVec2(-1, 0), "stability");
        for (std::size_t i = 0; i < plot_.size(); ++i)
            plot_[i] = demo_dev_cents(t_s - 0.02f * static_cast<float>(plot_.size() - i));
        ImGui::PlotLines("##dev", plot_.data(), static_cast<int>(plot_.size()), 0, "last 2.4 s", -20.0f, 20.0f,
                         ImVec2(ImGui::GetContentRegionAvail().x, 70));
        if (ImGui::BeginTable("chord", 3, ImGuiTableFlags_Borders | ImGuiTableFlags_RowBg)) {
            ImGui::TableSetupColumn("voice");
            ImGui::TableSetupColumn("Hz");
            ImGui::TableSetupColumn("cents vs ET");
            ImGui::TableHeadersRow();
            const char* names[] = {"root", "5/4", "3/2", "7/4"};
            const double ratios[] = {1.0, 1.25, 1.5, 1.75};
            for (int r = 0; r < 4; ++r) {
                ImGui::TableNextRow();
                ImGui::TableNextColumn();
                ImGui::TextUnformatted(names[r]);
                ImGui::TableNextColumn();
                ImGui::Text("%.2f", 146.83 * ratios[r]);
                ImGui::TableNextColumn();
                const double c = 1200.0 * std::log2(ratios[r]);
                ImGui::Text("%+.1f", c - 100.0 * std::round(c / 100.0));
            }
            ImGui::EndTable();
        }
        ImDrawList* dl = ImGui::GetWindowDrawList();
        const ImVec2 p = ImGui::GetCursorScreenPos();
        dl->AddCircleFilled(ImVec2(p.x + 30, p.y + 34), 26, IM_COL32(80, 140, 220, 255));
        dl->AddCircle(ImVec2(p.x + 100, p.y + 34), 26, IM_COL32(220, 120, 80, 255), 0, 3.0f);
        dl->AddRectFilled(ImVec2(p.x + 140, p.y + 8), ImVec2(p.x + 200, p.y + 60), IM_COL32(200, 60, 90, 160), 10.0f);
        dl->AddTriangleFilled(ImVec2(p.x + 215, p.y + 60), ImVec2(p.x + 245, p.y + 8), ImVec2(p.x + 275, p.y + 60),
                              IM_COL32(120, 220, 120, 200));
        dl->AddRectFilledMultiColor(ImVec2(p.x + 290, p.y + 8), ImVec2(p.x + 360, p.y + 60), IM_COL32(255, 0, 0, 255),
                                    IM_COL32(0, 255, 0, 255), IM_COL32(0, 0, 255, 255), IM_COL32(255, 255, 255, 255));
    }
    ImGui::End();

    // --- The notes panel: more text in every face --------------------------
    place(0, band_h + trace_h, trace_w, H - band_h - trace_h);
    ImGui::Begin("Notes", nullptr, kPanel);
    ImGui::TextWrapped(
        "Hold the note and listen for the slow beating between the 5th partial of the drone and the "
        "7th of yours; when the beats stop, the tritone is just. Vibrato centre: %+.1f cents.",
        static_cast<double>(dev * 0.5f));
    ImGui::PushFont(host.font(ui::FontFace::mono));
    ImGui::Text("t=%8.3f s   f0=%8.3f Hz   conf=0.97", static_cast<double>(t_s), 205.56 * std::pow(2.0, dev / 1200.0));
    ImGui::PopFont();
    ImGui::Bullet();
    ImGui::TextUnformatted("7/5  582.5 c   10/7  617.5 c   45/32  590.2 c   11/8  551.3 c");
    ImGui::Bullet();
    ImGui::TextUnformatted(
        "D\xE2\x99\xAF  E\xE2\x99\xAD  A4 = 440 Hz  \xE2\x88\x92"
        "12 c  \xE2\x86\x92 next");
    ImGui::End();
}

}  // namespace beatless::testing
