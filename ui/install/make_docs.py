#!/usr/bin/python3
"""Writes the man page and the bash completion from the program's --help texts.

Usage: make_docs.py BEATLESS_PROGRAM OUT_DIR
Runs `beatless --help`, `beatless --version` and `beatless COMMAND --help`
for every command the first one lists (CLI11's layout: "Options:",
"Positionals:", "Subcommands:" sections of two-column lines), and writes
OUT_DIR/beatless.1 (man(7) macros) and OUT_DIR/beatless (a bash completion
for bash-completion's completions folder). Run by the build after linking.
"""
import re
import subprocess
import sys

ITEM = re.compile(r"^  (\S.*?)(?:\s{2,}(\S.*))?$")


def run(prog, *args):
    return subprocess.run([prog, *args], capture_output=True, text=True, check=True).stdout


def sections(text):
    """{section: [(term, description)]} plus the lines before the first section."""
    out, intro, current = {}, [], None
    for line in text.splitlines():
        if re.match(r"^[A-Z][A-Za-z]*:$", line):
            current = line[:-1]
            out[current] = []
        elif current and line.startswith("  "):
            m = ITEM.match(line)
            if m:
                out[current].append((m.group(1).strip(), (m.group(2) or "").strip()))
            elif out[current]:  # a wrapped description
                term, desc = out[current][-1]
                out[current][-1] = (term, (desc + " " + line.strip()).strip())
        elif current is None and line.strip():
            intro.append(line.strip())
    return out, intro


def roff(text):
    """Text for a roff line: backslashes and hyphens escaped, no leading dot or quote."""
    text = text.replace("\\", "\\e").replace("-", "\\-")
    return "\\&" + text if text[:1] in (".", "'") else text


def option_names(term):
    return [t for t in re.split(r"[ ,]", term) if t.startswith("-")]


def man_page(prog):
    top, intro = sections(run(prog, "--help"))
    version = run(prog, "--version").strip()
    out = [f'.TH BEATLESS 1 "" "{roff(version)}" "User Commands"', ".SH NAME",
           "beatless \\- live tuner and intonation trainer for just intervals", ".SH SYNOPSIS",
           ".B beatless", "[\\fIOPTIONS\\fR]", ".br", ".B beatless", "\\fICOMMAND\\fR [\\fIOPTIONS\\fR] [\\fIARGUMENTS\\fR]",
           ".SH DESCRIPTION", roff(intro[0] if intro else ""), ".PP",
           roff("With no command it opens the Practice screen: it listens through the microphone (or the built-in "
                "demo performer with --demo), sounds a drone and shows how far the performer is from the just "
                "target, in cents and in beats per second."),
           ".SH OPTIONS"]
    for term, desc in top.get("Options", []):
        out += [".TP", ".B " + roff(term), roff(desc)]
    out.append(".SH COMMANDS")
    commands = [name for name, _ in top.get("Subcommands", [])]
    for name in commands:
        sub, sub_intro = sections(run(prog, name, "--help"))
        out += [f'.SS "{name}"', roff(sub_intro[0] if sub_intro else "")]
        usage = [line for line in sub_intro if line.startswith("Usage:")]
        if usage:
            out += [".PP", roff(usage[0])]
        for section in ("Positionals", "Options"):
            for term, desc in sub.get(section, []):
                if term.startswith("-h,--help"):
                    continue
                out += [".TP", ".B " + roff(term), roff(desc)]
    out += [".SH EXIT STATUS", "0 success, 1 bad input or a runtime failure, 2 bad usage. Every failure is one line "
            "on standard error naming the file, device or value and what is wrong with it.",
            ".SH FILES", ".TP", ".I $XDG_CONFIG_HOME/beatless/settings.toml", "preferences (default ~/.config)",
            ".TP", ".I $XDG_DATA_HOME/beatless/practice.sqlite3", "the practice log (default ~/.local/share)",
            ".TP", ".I /usr/share/beatless/targets/", "the built-in target sets, chords and drills as TOML, to copy "
            "and change (the program carries its own copy)",
            ".SH ENVIRONMENT", ".TP", ".B BEATLESS_HOME", "settings in $BEATLESS_HOME/config and data in "
            "$BEATLESS_HOME/data instead",
            ".SH CAUTION", roff("Beatless plays sustained tones. It starts quiet and limits its output, but keep the "
                                "level low, especially on headphones, and take breaks.")]
    return "\n".join(out) + "\n", top, commands


def completion(prog, top, commands):
    lines = ["# bash completion for beatless (generated from its --help texts)", "_beatless()", "{",
             "    local cur=${COMP_WORDS[COMP_CWORD]} sub= i",
             "    for ((i = 1; i < COMP_CWORD; i++)); do",
             "        case ${COMP_WORDS[i]} in",
             f"            {'|'.join(commands)}) sub=${{COMP_WORDS[i]}}; break ;;",
             "        esac", "    done", "    local words", "    case $sub in"]
    for name in commands:
        sub, _ = sections(run(prog, name, "--help"))
        opts = sorted({o for term, _ in sub.get("Options", []) for o in option_names(term)})
        lines.append(f'        {name}) words="{" ".join(opts)}" ;;')
    top_opts = sorted({o for term, _ in top.get("Options", []) for o in option_names(term)})
    lines += [f'        *) words="{" ".join(top_opts)}"; [[ $cur != -* ]] && words="{" ".join(commands)}" ;;',
              "    esac",
              "    # An option's value or a file: leave it to bash's file names (-o default).",
              '    if [[ -z $sub || $cur == -* ]]; then COMPREPLY=($(compgen -W "$words" -- "$cur")); fi',
              "}", "complete -o default -F _beatless beatless"]
    return "\n".join(lines) + "\n"


def main():
    prog, out_dir = sys.argv[1], sys.argv[2]
    page, top, commands = man_page(prog)
    if len(commands) < 2:
        sys.exit(f"{prog} --help: no commands found (has the help layout changed?)")
    with open(f"{out_dir}/beatless.1", "w") as f:
        f.write(page)
    with open(f"{out_dir}/beatless", "w") as f:
        f.write(completion(prog, top, commands))


if __name__ == "__main__":
    main()
