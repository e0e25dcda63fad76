#!/usr/bin/env python3
"""The manual page (docs/netfold.1) against the command it documents: every subcommand and
every option that `netfold --help` and `netfold CMD --help` list appear in it, its version is
the command's, and groff reads it without a warning. Run by ctest (man_page).

    check_man_page.py NETFOLD_BINARY docs/netfold.1
"""
import re
import shutil
import subprocess
import sys


def help_text(binary, *args):
    return subprocess.run([binary, *args, "--help"], capture_output=True, text=True, check=True).stdout


def main():
    binary, page_path = sys.argv[1], sys.argv[2]
    page = open(page_path, encoding="utf-8").read()
    # In troff source a hyphen of an option is written \-.
    plain = page.replace("\\-", "-")
    problems = []

    top = help_text(binary)
    commands = re.findall(r"^\s{2}(\w+)\s{2,}", top.split("Subcommands:")[-1], re.M)
    if not commands:
        problems.append("no subcommands found in 'netfold --help'")
    for command in commands:
        if not re.search(rf'^\.BI? "?{command}\b', page, re.M) or f"netfold {command}" not in plain:
            problems.append(f"subcommand '{command}' has no synopsis line or section")
        for option in sorted(set(re.findall(r"(?<![\w-])(--[a-z][a-z-]*)", help_text(binary, command)))):
            if option != "--help" and option not in plain:
                problems.append(f"'netfold {command} {option}' is not in the man page")

    version = subprocess.run([binary, "--version"], capture_output=True, text=True, check=True).stdout.split()[-1]
    th = re.search(r'^\.TH NETFOLD 1 "[^"]*" "netfold ([^"]+)"', page, re.M)
    if not th or th[1] != version:
        problems.append(f"the .TH line names version {th[1] if th else '?'}, the command is {version}")

    if shutil.which("groff"):
        warnings = subprocess.run(["groff", "-man", "-Tutf8", "-ww", "-z", page_path], capture_output=True, text=True)
        if warnings.returncode or warnings.stderr:
            problems.append("groff: " + warnings.stderr.strip())

    for p in problems:
        print("man page:", p)
    print(f"{len(commands)} subcommands checked, {len(problems)} problems")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
