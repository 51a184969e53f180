#!/bin/sh
# Qt's X11 platform plugin (xcb) loads system libraries a bare Linux machine may lack.
# Install them where we can (root with apt-get); otherwise say exactly what to install.
[ "$(uname -s)" = "Linux" ] || exit 0
command -v dpkg >/dev/null 2>&1 || exit 0
# Libraries every Qt platform loads (the offscreen one used by the tests needs only these) ...
LIBS="libegl1 libgl1 libfontconfig1 libxkbcommon0 libdbus-1-3 libglib2.0-0"
# ... and those of the X11 plugin a real window needs (`qt_libs.sh offscreen` skips them).
[ "${1:-}" = "offscreen" ] || LIBS="$LIBS libxcb-cursor0 libxcb-icccm4 libxcb-keysyms1 libxcb-image0 libxcb-render-util0 libxcb-shape0 libxcb-xkb1 libxkbcommon-x11-0"
missing=""
for lib in $LIBS; do
  dpkg -s "$lib" >/dev/null 2>&1 || missing="$missing $lib"
done
[ -z "$missing" ] && exit 0
if [ "$(id -u)" = "0" ] && command -v apt-get >/dev/null 2>&1; then
  echo "Installing the system libraries Qt needs:$missing"
  (apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $missing) >/dev/null 2>&1 && exit 0
  echo "springwright: could not install$missing with apt-get." >&2
fi
echo "springwright: Qt needs these system packages to open a window:$missing" >&2
echo "  install them with:  sudo apt-get install$missing" >&2
exit 1
