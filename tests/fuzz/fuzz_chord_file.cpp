// libFuzzer target: a chord TOML file, and the same bytes as a typed chord
// ("4:5:6:7", "1/1 5/4 3/2"), must load or throw beatless::Error; never crash.
#include "pitch/base/error.h"
#include "pitch/theory/chord.h"
#include "ui/session/chord_files.h"

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    using namespace beatless;
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    try {
        const ui::ChordFile f = ui::parse_chord_file(text, "fuzz.toml");
        if (f.chord.size() < 2) std::abort();
        if (!f.voice_names.empty() && f.voice_names.size() != f.chord.size()) std::abort();
    } catch (const Error& e) {
        if (std::string(e.what()).rfind("fuzz.toml", 0) != 0) std::abort();
    }
    try {
        (void)pitch::parse_chord(text);
    } catch (const Error&) {}
    return 0;
}
