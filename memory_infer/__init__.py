"""memory_infer: Bayesian tests for the nonlinear (displacement) gravitational-wave memory.

Data flow: modes -> memory -> polarizations -> likelihood -> evidence -> combination -> report.
"""
__version__ = "0.1.0"
