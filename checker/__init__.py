"""The independent checker: exact replay of tessella certificates.

Part of the trusted base: imports only certformat, python-flint and the standard library.
"""
