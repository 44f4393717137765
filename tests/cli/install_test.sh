#!/usr/bin/env bash
# `cmake --install` into a temporary prefix, then the installed program run from elsewhere: it finds
# its bundled demo library and plans beside itself (share/countersign), also after the whole prefix
# is moved, and the systemd units point at it. Usage: install_test.sh BUILD_DIR
set -euo pipefail
build=$1
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cmake --install "$build" --prefix "$work/prefix" >/dev/null

check_prefix() {  # check_prefix PREFIX
  local prefix=$1 status=0
  test -x "$prefix/bin/countersign"
  test -f "$prefix/share/countersign/beamdata/FERN-LINAC-1/machine.toml"
  test -f "$prefix/share/countersign/beamdata/FORMAT.md"
  test -f "$prefix/share/countersign/tolerance-policy.toml"
  test -f "$prefix/share/countersign/demo-plans/fern_box_4field.dcm"
  cd "$work"  # nothing relative to the source or build folder
  "$prefix/bin/countersign" check --json "$prefix/share/countersign/demo-plans/fern_box_4field.dcm" \
    >"$work/out.json" || status=$?
  # The demo box plan has one beam with a deliberate MU error: exit 1 (outside tolerance).
  [ "$status" -eq 1 ] || { echo "check exit code $status, expected 1"; cat "$work/out.json"; return 1; }
  grep -q "\"beamdata_root\": \"$prefix/share/countersign/beamdata\"" "$work/out.json" \
    || { echo "the bundled library was not found beside the program"; grep beamdata_root "$work/out.json"; return 1; }
  "$prefix/bin/countersign" check --policy "$prefix/share/countersign/tolerance-policy.toml" \
    "$prefix/share/countersign/demo-plans/fern_wedged_pair.dcm" >/dev/null
  "$prefix/bin/countersign" selftest >/dev/null
  "$prefix/bin/countersign" check --help | grep -q "$prefix/share/countersign/beamdata"
}

check_prefix "$work/prefix"
grep -q "^ExecStart=$work/prefix/bin/countersign watch" "$work/prefix/lib/systemd/system/countersign-watch.service"
grep -q "^ExecStart=$work/prefix/bin/countersign receive" "$work/prefix/lib/systemd/system/countersign-receive.service"
# Relocated: the data is found relative to the program, not where it was installed.
mv "$work/prefix" "$work/moved"
check_prefix "$work/moved"
echo "install ok"
