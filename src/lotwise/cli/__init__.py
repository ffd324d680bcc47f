"""The ``lotwise`` command line: a thin typer layer over the library.

Each command group lives in its own module and registers itself on
:data:`app`. The entry point :func:`main` turns every error into one line on
stderr: malformed input exits 2, a well-formed request that no plan can meet
exits 1, a plan that falls short on an audit exits 1.

The exit codes of every command (README, "Exit codes"): 0 meets / accept /
every row designed; 1 falls short / reject / a row failed / a recorded
disposition disagrees with its plan; 2 bad input; 3 continue (``next`` on the
bench when more units are needed). Output files are written whatever the
verdict; ``demo`` exits 0 when it ran.
"""

from __future__ import annotations

import os
import sys

import typer

app = typer.Typer(
    name="lotwise",
    help="Design, audit and document sampling plans for lot acceptance, computed exactly.",
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"]},
)


@app.callback()
def _group(version: bool = typer.Option(False, "--version", "-V",
                                        help="Print the version and exit.")) -> None:
    """Design, audit and document sampling plans for lot acceptance, computed exactly."""
    # A callback keeps typer treating the app as a group of commands even when
    # only the one command being run has been imported.


#: Which module defines each command, in the order ``lotwise --help`` lists them.
COMMANDS = {
    "design": "design", "check": "check", "oc": "oc",
    "sheet": "sheet", "compare": "compare", "demo": "demo",
    "draw": "draw", "zero": "zero", "demonstrate": "demonstrate",
    "next": "next_step", "judge": "judge",
    "records": "records", "supplier": "supplier", "tradeoff": "tradeoff",
    "batch": "batch", "validate": "validate",
    "scheme": "scheme",
    "serve": "serve",
}


#: Options that were renamed: the old spelling is refused with the new one named.
RENAMED = {"--defects": ("--per-unit", "quality levels are nonconformities per unit")}


def _register(args: list[str]) -> None:
    """Import the command modules (each adds its commands to ``app``).

    Only the module of the command being run is imported, which keeps the
    start-up of ``design``, ``check`` and ``oc`` short; help and unknown
    commands import them all.
    """
    import importlib

    first = next((a for a in args if not a.startswith("-")), None)
    wanted = [COMMANDS[first]] if first in COMMANDS else list(dict.fromkeys(COMMANDS.values()))
    for mod in wanted:
        importlib.import_module(f"{__name__}.{mod}")


def main(argv: list[str] | None = None) -> int:
    """Run the CLI; returns (and exits with) the process exit code."""
    _one_blas_thread()
    from lotwise.core.quantities import InputError

    args = sys.argv[1:] if argv is None else list(argv)
    if args[:1] in (["--version"], ["-V"]):
        from lotwise.core.version import __version__

        print(f"lotwise {__version__}")
        return _exit(0, argv)
    old = next((a for a in args if a.split("=", 1)[0] in RENAMED), None)
    if old is not None:
        new = RENAMED[old.split("=", 1)[0]]
        print(f"lotwise: error: {old} was renamed {new[0]} ({new[1]}); use {new[0]}",
              file=sys.stderr)
        return _exit(2, argv)
    _register(args)
    try:
        rv = app(args=args, prog_name="lotwise", standalone_mode=False)
        code = rv if isinstance(rv, int) else 0
    except typer.Exit as exc:
        code = exc.exit_code
    except typer.Abort:
        print("lotwise: aborted", file=sys.stderr)
        code = 1
    except typer.TyperException as exc:  # click's usage errors: bad option, missing value
        if type(exc).__name__ == "NoArgsIsHelpError":  # bare `lotwise` or a bare group
            print(exc.format_message())
            return _exit(0, argv)
        msg = " ".join(exc.format_message().split())
        print(f"lotwise: error: {msg}", file=sys.stderr)
        code = 2
    except InputError as exc:
        print(f"lotwise: error: {exc}", file=sys.stderr)
        code = 2
    except KeyboardInterrupt:
        print("lotwise: interrupted", file=sys.stderr)
        code = 130
    except BrokenPipeError:
        code = 0
    except Exception as exc:  # never a traceback, whatever the input
        print(f"lotwise: error: could not complete the request ({type(exc).__name__}: {exc})",
              file=sys.stderr)
        code = 2
    return _exit(code, argv)


#: Environment variables that set the thread count of numpy's and scipy's BLAS.
BLAS_THREADS = ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


def _one_blas_thread() -> None:
    """One BLAS thread per command, unless the user set a count.

    The commands compute with element-wise kernels and integer searches, never
    with matrix products, so a BLAS thread pool only costs its start-up: about
    0.15 s of processor time per command on two cores, which the sheet's
    figure processes and the pools of ``batch`` and ``demo`` would otherwise
    compete with. Set before numpy is imported (afterwards it has no effect).
    """
    if "numpy" in sys.modules:
        return
    for name in BLAS_THREADS:
        os.environ.setdefault(name, "1")


def _exit(code: int, argv) -> int:
    sys.stdout.flush()
    if argv is None:  # the program ends here (not a call of main() from Python)
        # Spare the interpreter's exit its garbage collection of every object left
        # (numpy's and scipy's modules included): about 20-50 ms of a command that
        # takes 0.3 s. Frozen objects are only left out of the cycle collector's
        # passes; the exit is otherwise the usual one (atexit handlers, flushed
        # files, module teardown).
        import gc

        gc.freeze()
        sys.exit(code)
    return code
