#!/bin/sh
# The browser test of the HTML report drives Debian's Chromium. Install it when it is
# missing and we may (root with apt-get, as on the project's machines and in CI);
# otherwise say how, and stop.
set -eu
if [ -x /usr/bin/chromium ]; then exit 0; fi
if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
  echo "installing Debian's chromium for the browser test of the HTML report" >&2
  apt-get update -qq
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium
  exit 0
fi
echo "the browser test needs /usr/bin/chromium: install Debian's chromium (apt-get install chromium) and run again" >&2
exit 1
