"""Checks that an adder adds: built-in evaluator, simulators, cocotb, formal proof, verify."""
