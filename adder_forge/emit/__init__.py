"""Back ends that only read the IR: Verilog, testbench and vectors, summaries, output folders."""
