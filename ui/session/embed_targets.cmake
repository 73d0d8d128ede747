# Writes OUT: a C++ file holding every DIR/*.toml as a string literal.
file(GLOB files ${DIR}/*.toml)
list(SORT files)
set(body "// Generated from targets/*.toml by ui/embed_targets.cmake. Do not edit.\n#include \"ui/session/target_files.h\"\n\nnamespace beatless::ui {\n\nconst std::vector<EmbeddedFile>& embedded_target_files() {\n    static const std::vector<EmbeddedFile> files = {\n")
foreach(f ${files})
  get_filename_component(name ${f} NAME)
  file(READ ${f} content)
  # The file's kind line (kind = "chord"), so that listing the built-in names of a kind parses nothing at start;
  # tests/test_target_files.cpp checks it against what the TOML parser reads.
  string(REGEX MATCH "(^|\n)kind *= *\"([a-z]+)\"" kind_line "${content}")
  set(kind "${CMAKE_MATCH_2}")
  # Raw string literal with a delimiter that never appears in TOML we write.
  string(APPEND body "        {\"${name}\", R\"beatless(${content})beatless\", \"${kind}\"},\n")
endforeach()
string(APPEND body "    };\n    return files;\n}\n\n}  // namespace beatless::ui\n")
file(WRITE ${OUT}.tmp "${body}")
file(COPY_FILE ${OUT}.tmp ${OUT} ONLY_IF_DIFFERENT)
