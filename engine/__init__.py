"""wheelwork's engine: train files, exact kinematics, sky truth, drift, search and checks.

Pure computation, no user-interface imports. The public face is :mod:`engine.api`.
"""
