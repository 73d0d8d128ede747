// libFuzzer target: the option parsers with their own syntax: --since,
// --lowest, --size and the ensemble's --channels/--names/--voices lists
// (three lines of the input) must succeed in range or throw beatless::Error.
#include "pitch/base/error.h"
#include "ui/session/chord_files.h"
#include "ui/session/ensemble_plan.h"
#include "ui/session/option_parsers.h"
#include "ui/session/practice_log.h"

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    using namespace beatless;
    const std::string text(reinterpret_cast<const char*>(data), size);
    try {
        const std::string since = ui::parse_since(text);
        if (since.empty() || since.size() > 24) std::abort();
    } catch (const Error&) {}
    try {
        const double hz = ui::parse_lowest(text, 440.0);
        if (!(hz >= 30.0 && hz <= 200.0)) std::abort();
    } catch (const Error&) {}
    try {
        int w = 0, h = 0;
        ui::parse_size(text, w, h);
        if (w < 320 || h < 240 || w > 7680 || h > 4320) std::abort();
    } catch (const Error&) {}
    static const ui::ChordFile chord = ui::chord_from_argument("4:5:6:7");
    ui::PlanLists lists;
    const auto nl1 = text.find('\n');
    const auto nl2 = nl1 == std::string::npos ? std::string::npos : text.find('\n', nl1 + 1);
    lists.channels = text.substr(0, nl1);
    if (nl1 != std::string::npos)
        lists.names = text.substr(nl1 + 1, nl2 == std::string::npos ? std::string::npos : nl2 - nl1 - 1);
    if (nl2 != std::string::npos) lists.voices = text.substr(nl2 + 1);
    try {
        const auto players = ui::plan_players(chord, lists);
        if (players.empty() || players.size() > 64) std::abort();
    } catch (const Error&) {}
    return 0;
}
