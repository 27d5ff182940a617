"""Command line of hingeline (private: the public interface is the `hingeline` command).

One module per subcommand, each with `add_args(parser)` and `run(args) -> int`;
handlers only call the library and print. main.py maps errors to exit codes.
"""
