"""Formats of tessella: problems (SMT-LIB 2.6 QF_NRA subset and a native syntax) and certificates.

Part of the trusted base: never imports the prover.
"""
