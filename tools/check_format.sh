#!/usr/bin/env bash
# Exits non-zero when a C++ file under src/, include/, tests/, bench/ or python/ is not formatted
# as .clang-format says; names each such file. Run from anywhere inside the repository.
# CLANG_FORMAT overrides the program (default: clang-format, installed by scripts/bootstrap).
set -euo pipefail
cd "$(git rev-parse --show-toplevel)"
clang_format=${CLANG_FORMAT:-clang-format}
if ! command -v "$clang_format" > /dev/null; then
  echo "check_format: $clang_format not found (scripts/bootstrap installs it)" >&2
  exit 2
fi
status=0
while IFS= read -r -d '' file; do
  if ! "$clang_format" --style=file --dry-run --Werror "$file" > /dev/null 2>&1; then
    echo "not formatted: $file (clang-format -i $file)"
    status=1
  fi
done < <(git ls-files -z -- 'src/*' 'include/*' 'tests/*' 'bench/*' 'python/*' |
         grep -zE '\.(cpp|hpp|cc|h)$')
exit $status
