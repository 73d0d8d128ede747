// The analysis report page: pixels where the layout says things are.
//
// Source: the page is specified in ui/screens/take_report.h (white paper, bar
// colours by |deviation|: within 5 cents, within 15, beyond; trace in
// cents over time). The checks read the rendered pixels back at the places
// report_layout() maps times and cents to, so a wrong mapping, a missing
// layer or a wrong colour fails them.
#include "pitch/measure/decimated_trace.h"
#include "tests/cli.h"
#include "ui/render/png.h"
#include "ui/screens/take_report.h"

#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>

using namespace beatless;
using namespace beatless::ui;

namespace {
ReportData sample(const pitch::DecimatedTrace* trace, double dur_s) {
    ReportData d;
    d.title = "take.wav";
    d.subtitle = "root 110.000 Hz (A2 +0.0 c)";
    d.axis_label = "cents above the root";
    d.dur_s = dur_s;
    d.trace = trace;
    d.targets = {{582.512, "7/5", "lesser septimal tritone", true},
                 {617.488, "10/7", "greater septimal tritone", true},
                 {551.318, "11/8", "", false}};
    // The voice an octave up: targets at 1782.5 and 1817.5 cents.
    d.marks = {
        {1.0, 3.0, 1780.5, 1782.512, -2.0}, {4.0, 6.0, 1826.5, 1817.488, 9.0}, {7.0, 9.0, 1762.5, 1782.512, -20.0}};
    d.summary = {{"7/5", "lesser septimal tritone", 2, -11.0, 12.7, "averages 11 cents flat"},
                 {"10/7", "greater septimal tritone", 1, 9.0, 0.0, "averages 9 cents sharp"}};
    return d;
}

// Share of the pixels on a horizontal run that have exactly `col`.
double share(const PixelBuffer& p, float x0, float x1, float y, std::uint32_t col) {
    int n = 0, hit = 0;
    for (int x = static_cast<int>(x0); x < static_cast<int>(x1); ++x, ++n) hit += p.at(x, static_cast<int>(y)) == col;
    return n ? static_cast<double>(hit) / n : 0.0;
}

bool inked(const PixelBuffer& p, int x0, int y0, int x1, int y1) {
    for (int y = y0; y < y1; ++y)
        for (int x = x0; x < x1; ++x) {
            const std::uint32_t c = p.at(x, y);
            if ((c & 0xFF) < 140 && ((c >> 8) & 0xFF) < 140 && ((c >> 16) & 0xFF) < 160) return true;
        }
    return false;
}
}  // namespace

TEST_CASE("note bars at their centres in the colour of their deviation; white paper; title and table inked") {
    const ReportData d = sample(nullptr, 10.0);
    PixelBuffer page;
    render_report(d, page);
    REQUIRE(page.width_px == kReportWidthPx);
    REQUIRE(page.height_px == kReportHeightPx);
    CHECK(page.at(2, 2) == kReportPaper);
    CHECK(page.at(kReportWidthPx - 3, kReportHeightPx - 3) == kReportPaper);
    const ReportLayout l = report_layout(d);
    for (const ReportMark& m : d.marks) {
        CHECK(m.cents > l.c_lo);
        CHECK(m.cents < l.c_hi);
    }
    const std::uint32_t expect[] = {kReportGood, kReportFair, kReportPoor};
    for (std::size_t i = 0; i < d.marks.size(); ++i) {
        CAPTURE(i);
        const ReportMark& m = d.marks[i];
        const float x0 = l.x_of(m.start_s), x1 = l.x_of(m.end_s);
        // The left third of the bar: away from the stem and the label.
        CHECK(share(page, x0 + 4, x0 + (x1 - x0) / 3, l.y_of(m.cents), expect[i]) > 0.95);
        // Well above or below the bar it is not drawn.
        CHECK(share(page, x0 + 4, x0 + (x1 - x0) / 3, l.y_of(m.cents) - 30, expect[i]) < 0.05);
    }
    // Ink in the title, in the target labels beside the plot, and in the table below.
    CHECK(inked(page, 30, 20, 300, 70));
    CHECK(inked(page, static_cast<int>(l.plot_x1) + 30, static_cast<int>(l.y_of(1782.512)) - 14,
                static_cast<int>(l.plot_x1) + 100, static_cast<int>(l.y_of(1782.512)) + 14));
    CHECK(inked(page, 30, static_cast<int>(l.plot_y1) + 100, 400, kReportHeightPx - 40));
}

TEST_CASE("the trace: a line where the frames were, gaps left empty, hours of frames in a band") {
    pitch::DecimatedTrace tr;
    for (double t = 0.0; t < 10.0; t += 0.005) tr.push(t, t < 5.0 ? 1700.0 : 1850.0, t < 9.5 || t > 9.8);
    ReportData d = sample(&tr, 10.0);
    d.marks.clear();
    PixelBuffer page;
    render_report(d, page);
    const ReportLayout l = report_layout(d);
    auto trace_at = [&](double t, double c) {
        const int x = static_cast<int>(l.x_of(t)), y = static_cast<int>(l.y_of(c));
        for (int dy = -2; dy <= 2; ++dy) {
            const std::uint32_t p = page.at(x, y + dy);
            if (((p >> 16) & 0xFF) > 100 && (p & 0xFF) < 90) return true;  // the trace's dark blue
        }
        return false;
    };
    CHECK(trace_at(2.0, 1700.0));
    CHECK(trace_at(7.0, 1850.0));
    CHECK_FALSE(trace_at(2.0, 1850.0));
    CHECK_FALSE(trace_at(9.65, 1850.0));  // the gap

    // Two hours: the trace decimates to buckets wider than a pixel and is drawn as a band.
    pitch::DecimatedTrace longer;
    for (double t = 0.0; t < 7200.0; t += 0.005) longer.push(t, 1780.0 + 30.0 * std::sin(6.283 * 5.5 * t), true);
    CHECK(longer.size() <= 8192);
    ReportData dl = sample(&longer, 7200.0);
    dl.marks.clear();
    render_report(dl, page);
    const ReportLayout ll = report_layout(dl);
    // The band is drawn lighter than a line (ui/screens/take_report.cpp kTraceDense, blue over red).
    int band = 0;
    for (int y = static_cast<int>(ll.y_of(1800.0)); y < static_cast<int>(ll.y_of(1760.0)); ++y) {
        const std::uint32_t p = page.at(static_cast<int>(ll.x_of(3500.0)), y);
        band += ((p >> 16) & 0xFF) > (p & 0xFF) + 30;
    }
    CHECK(band > 10);
    int above = 0;  // nothing of the band well above its frames
    for (int y = static_cast<int>(ll.y_of(1850.0)); y < static_cast<int>(ll.y_of(1825.0)); ++y) {
        const std::uint32_t p = page.at(static_cast<int>(ll.x_of(3500.0)), y);
        above += ((p >> 16) & 0xFF) > (p & 0xFF) + 30;
    }
    CHECK(above == 0);
}

TEST_CASE("written as PNG; an unwritable path is one line naming it") {
    test::TempDir dir;
    const ReportData d = sample(nullptr, 10.0);
    write_report(dir.file("r.png"), d);
    std::FILE* f = std::fopen(dir.file("r.png").c_str(), "rb");
    REQUIRE(f != nullptr);
    unsigned char sig[8] = {};
    CHECK(std::fread(sig, 1, 8, f) == 8);
    std::fclose(f);
    CHECK(sig[1] == 'P');
    CHECK_THROWS_WITH(
        write_report(dir.file("none/r.png"), d),
        (dir.file("none/r.png") + ": the folder " + dir.file("none") + " does not exist (create it first)").c_str());
}
