// Log CSV — the practice log as a CSV file a teacher can open, and back: RFC 4180 quoting, traces in base64
// (RFC 4648), rows in start-time order (export -> import -> export gives the same bytes); import is all or none and
// skips attempts already in the log. Columns: DEVELOPERS.md, "Methods in detail".
// Thread: the caller's. Allocates: yes.
#pragma once

#include "ui/session/practice_log.h"

#include <ostream>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

// Appends one attempt's row (with a trailing LF) to out.
void append_csv_row(std::string& out, const Attempt& a, bool with_trace);
std::string csv_header(bool with_trace);

// Writes the header and every attempt matching the filter; returns the count.
std::size_t export_csv(const PracticeLog& log, const AttemptFilter& filter, bool with_trace, std::ostream& out);

// Writes attempts kept in memory (see ui/session/log_writer.h) as the same CSV.
std::string attempts_csv(const std::vector<Attempt>& attempts, bool with_trace);

// Parses and checks a whole file. Throws Error "source:LINE: problem".
std::vector<Attempt> parse_log_csv(std::string_view text, const std::string& source, const PracticeLog& checker);

struct ImportResult {
    std::size_t rows = 0;     // attempts in the file
    std::size_t added = 0;    // new to the log
    std::size_t skipped = 0;  // already there (same uid)
};
// Imports in one transaction: everything or nothing.
ImportResult import_csv(PracticeLog& log, std::string_view text, const std::string& source);

// One field, quoted when it holds a comma, a quote or a line break.
std::string csv_field(std::string_view text);

// A uid made from a row's content, for a row whose uid is empty, so the same
// row imported again is recognised: FNV-1a 128-bit (Fowler, Noll, Vo; IETF
// draft-eastlake-fnv, offset basis and prime of 128 bits) as 32 hex digits.
std::string content_uid(std::string_view content);

std::string base64_encode(std::string_view bytes);
// Throws Error naming the problem when the text is not base64.
std::string base64_decode(std::string_view text);

}  // namespace beatless::ui
