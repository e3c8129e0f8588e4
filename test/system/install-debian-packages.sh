#!/usr/bin/env bash
# Installs, from Debian's packages, the system software that some tests need:
# chromium (the HTML report is opened in a real browser) and a single-node
# Slurm with munge (the cluster array job is submitted to a real scheduler).
# Tests that need them skip with a message where they are missing; this
# script is the "full test" path that CI runs. Needs root (or sudo).
set -euo pipefail
packages=(chromium slurm-wlm munge)
missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || missing+=("$p")
done
if [ ${#missing[@]} -eq 0 ]; then
  echo "system test packages already installed: ${packages[*]}"
  exit 0
fi
SUDO=""
if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get update -qq
$SUDO apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
echo "installed: ${missing[*]}"
