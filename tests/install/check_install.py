#!/usr/bin/python3
"""Installs the build into a temporary prefix and checks what a user gets.

Usage: check_install.py BUILD_DIR
Sources: the prefix layout is the GNU Coding Standards' (GNUInstallDirs);
the desktop entry's keys are the freedesktop.org Desktop Entry
Specification 1.5 (Type, Name, Exec required for Application; Icon names a
theme icon; Categories from the Desktop Menu Specification's registered
list); icons follow the Icon Theme Specification (hicolor/scalable/apps,
hicolor/256x256/apps); the PNG's signature and IHDR are the PNG
specification (ISO/IEC 15948); the man page uses man(7) macros; the
completion is driven the way bash drives it (COMP_WORDS, COMP_CWORD).
"""
import gzip
import os
import re
import struct
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

failures = []


def check(ok, what):
    if not ok:
        failures.append(what)


def main():
    build = sys.argv[1]
    with tempfile.TemporaryDirectory() as prefix:
        subprocess.run(["cmake", "--install", build, "--prefix", prefix], check=True, capture_output=True)
        p = lambda *a: os.path.join(prefix, *a)
        prog = p("bin", "beatless")
        check(os.access(prog, os.X_OK), "bin/beatless is not an executable")
        # The installed program runs from anywhere: the built-in files are inside it.
        r = subprocess.run([prog, "ratio", "7/5"], capture_output=True, text=True, cwd="/")
        check(r.returncode == 0 and r.stdout.startswith("7/5  lesser septimal tritone"), f"installed ratio 7/5: {r.stdout!r} {r.stderr!r}")
        targets = p("share", "beatless", "targets")
        check(os.path.isfile(os.path.join(targets, "tritones.toml")), "share/beatless/targets/tritones.toml missing")

        entry = p("share", "applications", "beatless.desktop")
        keys = {}
        group = None
        for line in open(entry, encoding="utf-8"):
            line = line.rstrip("\n")
            if line.startswith("["):
                group = line
            elif "=" in line and not line.startswith("#"):
                k, v = line.split("=", 1)
                keys[(group, k)] = v
        g = "[Desktop Entry]"
        check(keys.get((g, "Type")) == "Application", "desktop entry: Type is not Application")
        for k in ("Name", "Exec", "Icon", "Categories"):
            check((g, k) in keys, f"desktop entry: no {k}")
        check(keys.get((g, "Exec"), "").split()[0] == "beatless", "desktop entry: Exec does not run beatless")
        cats = keys.get((g, "Categories"), "").rstrip(";").split(";")
        check("AudioVideo" in cats and "Audio" in cats, "desktop entry: Audio needs AudioVideo beside it")
        check(keys.get((g, "Categories"), "").endswith(";"), "desktop entry: Categories must end with ';'")

        svg = p("share", "icons", "hicolor", "scalable", "apps", keys.get((g, "Icon"), "") + ".svg")
        check(ET.parse(svg).getroot().tag == "{http://www.w3.org/2000/svg}svg", "icon: not an SVG document")
        png = open(p("share", "icons", "hicolor", "256x256", "apps", "beatless.png"), "rb").read()
        check(png[:8] == b"\x89PNG\r\n\x1a\n" and png[12:16] == b"IHDR", "icon: not a PNG")
        check(struct.unpack(">II", png[16:24]) == (256, 256), "icon: the 256x256 PNG is another size")

        page = gzip.open(p("share", "man", "man1", "beatless.1.gz"), "rt").read()
        check(page.startswith(".TH BEATLESS 1"), "man page: no .TH BEATLESS 1")
        commands = re.findall(r"^  (\w+) {2,}", subprocess.run([prog, "--help"], capture_output=True, text=True).stdout.split("Subcommands:")[1], re.M)
        check(len(commands) >= 10, f"--help lists only {commands}")
        for c in commands:
            check(f'.SS "{c}"' in page, f"man page: no section for {c}")
        check("\\-\\-export" in page, "man page: history --export missing or hyphens not escaped")

        comp = p("share", "bash-completion", "completions", "beatless")

        def complete(*words):
            script = (f"source '{comp}'; COMP_WORDS=(beatless {' '.join(words)}); COMP_CWORD={len(words)}; "
                      "_beatless; echo \"${COMPREPLY[*]}\"")
            return subprocess.run(["bash", "-c", script], capture_output=True, text=True).stdout.split()

        check(complete("hist") == ["history"], f"completion of 'hist': {complete('hist')}")
        check(complete("history", "--ex") == ["--export"], f"completion of 'history --ex': {complete('history', '--ex')}")
        check("--out" in complete("tone", "--"), "completion: tone's options lack --out")
    for f in failures:
        print("check_install:", f)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
