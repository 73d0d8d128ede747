// libFuzzer target: a practice-log CSV import (parse_log_csv with its field
// checks, base64_decode, decode_trace and the settings JSON check) must parse
// or throw beatless::Error naming the source; never crash or hit UB.
#include "pitch/base/error.h"
#include "ui/session/log_csv.h"
#include "ui/session/practice_log.h"

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    using namespace beatless;
    static ui::PracticeLog checker(":memory:");  // SQLite's in-memory database: no file
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    try {
        for (const ui::Attempt& a : ui::parse_log_csv(text, "fuzz.csv", checker))
            if (!ui::is_uid(a.uid)) std::abort();  // every row has a uid, given or made from its content
    } catch (const Error& e) {
        if (std::string(e.what()).rfind("fuzz.csv", 0) != 0) std::abort();
    }
    try {
        const std::string bytes = ui::base64_decode(text);
        if (ui::base64_decode(ui::base64_encode(bytes)) != bytes) std::abort();
    } catch (const Error&) {}
    try {
        (void)ui::decode_trace(data, size);
    } catch (const Error&) {}
    if (ui::content_uid(text).size() != 32) std::abort();
    return 0;
}
