"""slopetune's user-facing side: the command line, the setup-file writer and the Textual tuner.

Physics lives in `engine/`; this package only reads input, calls the engine and shows results.
"""
