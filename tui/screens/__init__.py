"""Modal screens the tuner pushes: confirm, path prompt, open file, help, measuring.

Each screen lives in its own module with a sibling `.tcss`; import the module you need (nothing is
imported here, so the tuner starts without loading screens it may never show).
"""
