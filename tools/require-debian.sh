# Sourced by tools/test.sh and tools/bench.sh: require_debian_packages SCRIPT PACKAGE... checks each
# Debian package with dpkg-query and installs the missing ones with apt when run as root. Otherwise
# it prints the exact apt line and returns 2; it returns 1 when apt fails and 0 when all are there.
require_debian_packages() {
  local script=$1
  shift
  local missing=() p
  for p in "$@"; do
    # dpkg-query prints "install ok installed" only for a package that is fully installed.
    if [ "$(dpkg-query -W -f='${Status}' "$p" 2>/dev/null)" != "install ok installed" ]; then
      missing+=("$p")
    fi
  done

  [ "${#missing[@]}" -eq 0 ] && return 0
  if [ "$(id -u)" != 0 ]; then
    echo "$script: missing Debian packages: ${missing[*]}" >&2
    echo "install them as root, then run this again:" >&2
    echo "  apt-get update && apt-get install -y --no-install-recommends $*" >&2
    return 2
  fi

  echo "$script: installing ${missing[*]}" >&2
  if ! { DEBIAN_FRONTEND=noninteractive apt-get update -qq >/dev/null &&
         DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "$@" >/dev/null; }; then
    echo "$script: apt-get install failed" >&2
    return 1
  fi
}
