"""Command line: argument parsing and exit codes only.

Exit codes: 0 success; 2 a bad spec or bad data (one line per problem, no traceback);
1 an internal error (with traceback).
"""

from __future__ import annotations

import argparse
import os
import sys
import warnings
from pathlib import Path
from typing import Sequence

# One BLAS thread per process, set before numpy is first imported: figspec's arrays are
# elementwise work, its few matrix solves are tiny, and `render --jobs N` runs N processes;
# OpenBLAS's own threads would only spin (about 0.1 s of CPU at start-up) and compete for the
# cores. A value the user sets in the environment wins.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

from figspec import __version__  # noqa: E402  (after the setting above)
from figspec.errors import FigspecWarning, Problem, UserError  # noqa: E402
from figspec.output.names import check_stems  # noqa: E402
from figspec.spec.models import KNOWN_FORMATS as ALL_FORMATS  # noqa: E402

EXIT_OK, EXIT_INTERNAL, EXIT_USER, EXIT_DIFFERS = 0, 1, 2, 3


def _spec_files(items: Sequence[str]) -> list[Path]:
    files: list[Path] = []
    for item in items:
        path = Path(item)
        if path.is_dir():
            found = sorted(path.glob("*.toml"))
            if not found:
                raise UserError(Problem("no spec files (*.toml) in this folder", file=str(path)))
            files += found
        else:
            files.append(path)
    check_stems(files)
    return files


def _formats(text: str | None) -> list[str] | None:
    if text is None:
        return None
    formats = [f.strip().lower() for f in text.split(",") if f.strip()]
    bad = [f for f in formats if f not in ALL_FORMATS]
    if bad or not formats:
        raise UserError(Problem(f"--format takes a comma-separated list of {', '.join(ALL_FORMATS)}",
                                got=text))
    return formats


class _Help(argparse.RawDescriptionHelpFormatter):
    """Help that shows each option's default (where it has one) and keeps the examples' lines."""

    def _get_help_string(self, action: argparse.Action) -> str:
        text = action.help or ""
        if action.option_strings and "default" not in text and action.default not in (None, False, argparse.SUPPRESS):
            text += " (default: %(default)s)"
        return text


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="figspec", description="Render spike raster and rate figures "
                                     "from reviewable TOML specs.")
    parser.add_argument("--version", action="version", version=f"figspec {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    render = sub.add_parser("render", formatter_class=_Help, epilog='examples:\n  figspec render specs -o figures\n  figspec render specs/fig2.toml --format pdf --style projected --force', help="render specs (files or folders of *.toml) to figures")
    render.add_argument("specs", nargs="+", metavar="SPEC_OR_FOLDER")
    render.add_argument("-o", "--outdir", default="figures", help="output folder")
    render.add_argument("--format", dest="formats", metavar="LIST",
                        help="comma-separated formats, overriding the specs' (svg,pdf,png)")
    render.add_argument("--style", metavar="NAME", help="render in this style instead of the specs' own")
    render.add_argument("--jobs", "-j", type=int, metavar="N", default=None,
                        help="render N specs at once in worker processes (default: the number of cores)")
    render.add_argument("--force", action="store_true",
                        help="render every spec, also those whose outputs are up to date")
    render.add_argument("--scheduler", metavar="ADDRESS",
                        help="run the renders on this Dask distributed scheduler (needs figspec[cluster])")
    check = sub.add_parser("check", formatter_class=_Help, epilog='examples:\n  figspec check specs\n  figspec check specs/fig2.toml --profile nature --strict', help="validate specs and their data; draw nothing")
    check.add_argument("specs", nargs="+", metavar="SPEC")
    check.add_argument("--style", metavar="NAME", help="check in this style instead of the specs' own")
    snap = sub.add_parser("snapshot", formatter_class=_Help, epilog='examples:\n  figspec snapshot specs --dir tests/figure_baselines', help="store baseline images (and hashes) of specs")
    snap.add_argument("specs", nargs="+", metavar="SPEC_OR_FOLDER")
    snap.add_argument("--dir", default="figure_baselines", help="baseline folder")
    comp = sub.add_parser("compare", formatter_class=_Help, epilog='examples:\n  figspec compare specs --dir tests/figure_baselines\n  figspec compare specs/fig2.toml --tolerance 2', help="re-render specs and compare with their baselines (exit 3 if any differs)")
    comp.add_argument("specs", nargs="+", metavar="SPEC_OR_FOLDER")
    comp.add_argument("--dir", default="figure_baselines", help="baseline folder")
    comp.add_argument("--tolerance", type=float, default=1.0, help="largest RMS difference (0-255) that passes")
    comp.add_argument("-o", "--outdir", default="figure_comparison", help="actual, expected and difference images")
    schema = sub.add_parser("schema", formatter_class=_Help, epilog='examples:\n  figspec schema -o specs/spec.schema.json', help="write the JSON Schema of a spec file (for editor completion)")
    schema.add_argument("-o", "--output", metavar="FILE", help="write it here (default: print it)")
    dra = sub.add_parser("draft", formatter_class=_Help, epilog='examples:\n  figspec draft data/spikes.csv data/trials.csv -o specs/unit1.toml\n  figspec draft data/session.nwb -o specs/session.toml', help="write a first spec from a spike table and a trial table (every guess a comment)")
    dra.add_argument("spikes", metavar="SPIKES", help="the spike table (CSV, Parquet) or an NWB file")
    dra.add_argument("trials", metavar="TRIALS", nargs="?", help="the trial table (leave out for an NWB file, or when "
                     "the spike table has level and trial columns)")
    dra.add_argument("-o", "--output", metavar="SPEC", required=True, help="the spec file to write")
    dra.add_argument("--force", action="store_true", help="overwrite SPEC if it exists")
    wat = sub.add_parser("watch", formatter_class=_Help, epilog='examples:\n  figspec watch specs/fig2.toml\n  figspec watch specs/fig2.toml --format png,pdf --style projected', help="render a spec again on every save of it, its data or its style; the index page reloads itself (needs figspec[preview])")
    wat.add_argument("spec", metavar="SPEC")
    wat.add_argument("-o", "--outdir", default="figure_preview", help="output folder (open its index.html)")
    wat.add_argument("--format", dest="formats", metavar="LIST", default="png", help="comma-separated formats")
    wat.add_argument("--style", metavar="NAME", help="render in this style instead of the spec's own")
    dif = sub.add_parser("diff", formatter_class=_Help, epilog='examples:\n  figspec diff specs/fig2.toml --rev main\n  figspec diff specs/fig2.toml --old old/fig2.toml', help="show what changed between two versions of a spec")
    dif.add_argument("spec", metavar="SPEC", help="the new version")
    which = dif.add_mutually_exclusive_group(required=True)
    which.add_argument("--old", metavar="SPEC", help="the old version, as a file")
    which.add_argument("--rev", metavar="REVISION", help="the old version: the same file at this git revision")
    dif.add_argument("-o", "--outdir", default="figure_diff", help="where the images and summary go")
    for sub_parser in (render, check):
        sub_parser.add_argument("--journal", action="store_true",
                                help="check the figure against the journal profile in the spec's figure.journal")
        sub_parser.add_argument("--profile", metavar="NAME",
                                help="check the figure against this journal profile instead (implies --journal), "
                                     "e.g. nature, jneurosci, cell, or a path to a profile .toml")
        sub_parser.add_argument("--strict", action="store_true", help="layout and journal check findings exit 2")
    return parser


def run(argv: Sequence[str] | None = None) -> int:
    """Run the CLI; returns the exit code."""
    args = _parser().parse_args(argv)
    from figspec import pipeline

    if args.command in ("snapshot", "compare", "diff"):
        return _review(args)
    if args.command == "render":
        return _render(args)
    if args.command == "draft":
        return _draft(args)
    if args.command == "watch":
        return _watch(args)
    if args.command == "schema":
        from figspec.output.safe_write import write_text
        from figspec.spec.schema import schema_text

        if args.output:
            try:
                write_text(args.output, schema_text(), make_parents=False)
            except UserError as err:
                return _failed(err)
            print(f"wrote {args.output}")
        else:
            sys.stdout.write(schema_text())
        return EXIT_OK
    failed = False
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", FigspecWarning)
        try:
            files = _spec_files(args.specs)
            _formats(getattr(args, "formats", None))          # a bad --format is a user error here
        except UserError as err:
            files, failed = [], True
            for problem in err.problems:
                print(problem.format(), file=sys.stderr)
        for path in files:
            try:
                resolved = pipeline.check(path, args.style)
                for note in pipeline.notes(resolved):
                    print(f"note: {note}", file=sys.stderr)
                profile = args.profile
                if args.command == "check" and not (args.journal or profile):
                    from figspec.steps.journal import profile as named_profile

                    named_profile(resolved, None)             # a journal named in the spec must exist
                if args.journal or profile:
                    result = pipeline.journal_check(resolved, profile)
                else:
                    result = None
                    print(f"{path}: ok ({len(resolved.panels)} panels)")
                if result is not None and result.profile is not None:
                    for finding in result.findings:
                        print(f"{path}: {finding.format(result.profile)}", file=sys.stderr)
                    count = len(result.findings)
                    print(f"{path}: journal check {result.profile.name}: {count} finding{'' if count == 1 else 's'}")
                    failed = failed or (args.strict and bool(result.findings))
            except UserError as err:
                failed = True
                for problem in err.problems:
                    print(problem.format(), file=sys.stderr)
            finally:
                for message in dict.fromkeys(str(w.message) for w in caught if issubclass(w.category, FigspecWarning)):
                    print(f"{path}: warning: {message}", file=sys.stderr)
                caught.clear()
    return EXIT_USER if failed else EXIT_OK


def _render(args: argparse.Namespace) -> int:
    """``render``: build every spec (skipping those up to date), report each as it finishes,
    close with a table when there were several; the exit status is the worst of all."""
    from figspec.build import BuildOptions, Progress, build, default_jobs, summary_table, worst

    try:
        files = _spec_files(args.specs)
        formats = _formats(args.formats)
    except UserError as err:
        return _failed(err)
    options = BuildOptions(args.outdir, tuple(formats) if formats else None, args.style, args.profile,
                           args.strict, args.force)
    jobs = args.jobs if args.jobs is not None else default_jobs()
    runner = None
    if args.scheduler:
        from functools import partial

        from figspec.cluster import run_on_cluster

        runner = partial(run_on_cluster, args.scheduler)
    try:
        results = build(files, options, jobs, runner, Progress(args.outdir))
    except UserError as err:                  # e.g. no cluster extra, or no scheduler at the address
        for problem in err.problems:
            print(problem.format(), file=sys.stderr)
        return EXIT_USER
    if len(results) > 1:
        print(summary_table(results))
    if (Path(args.outdir) / "index.html").is_file():
        print(f"index of every figure in {args.outdir}: {Path(args.outdir) / 'index.html'}")
    return worst([r.exit for r in results])


def _draft(args: argparse.Namespace) -> int:
    """``draft``: survey the data, write the spec, check it, and list the questions left."""
    from figspec.draft import write_draft

    try:
        for stream, line in write_draft(Path(args.spikes), Path(args.trials) if args.trials else None,
                                        Path(args.output), args.force):
            print(line, file=sys.stderr if stream == "err" else sys.stdout)
    except UserError as err:
        return _failed(err)
    return EXIT_OK


def _watch(args: argparse.Namespace) -> int:
    """``watch``: render, then render again on every save until Ctrl-C."""
    from figspec.build import BuildOptions
    from figspec.optional import require
    from figspec.preview import Preview

    try:
        require("watchfiles", "figspec watch")
        spec = _spec_files([args.spec])
        if len(spec) != 1:
            raise UserError(Problem("figspec watch takes one spec file", file=args.spec))
        options = BuildOptions(args.outdir, tuple(_formats(args.formats)), args.style, None, False, True)
    except UserError as err:
        return _failed(err)
    preview = Preview(spec[0], options, lambda line: print(line, flush=True))
    try:
        preview.render()
    except UserError as err:
        return _failed(err)
    print(f"open {(Path(args.outdir) / 'index.html').resolve().as_uri()} ; watching "
          f"{len(preview.files)} files (Ctrl-C stops)", flush=True)
    try:
        preview.watch()
    except KeyboardInterrupt:
        pass
    except UserError as err:
        return _failed(err)
    return EXIT_OK


def _review(args: argparse.Namespace) -> int:
    from figspec import review

    try:
        if args.command == "snapshot":
            written = review.snapshot(_spec_files(args.specs), Path(args.dir))
            print(f"stored {len(written) - 1} baselines in {args.dir}")
            return EXIT_OK
        if args.command == "compare":
            results = review.compare(_spec_files(args.specs), Path(args.dir), args.tolerance, Path(args.outdir))
            for result in results:
                print(f"{result.image.name}: {'unchanged' if result.passed else 'CHANGED'} ({result.image.message})")
            changed = sum(not r.passed for r in results)
            print(f"{changed} of {len(results)} figures changed beyond the tolerance; review page "
                  f"{Path(args.outdir) / review.PAGE}, images and summary.txt beside it")
            return EXIT_OK if all(r.passed for r in results) else EXIT_DIFFERS
        lines = review.diff(Path(args.spec), Path(args.old) if args.old else None, args.rev, Path(args.outdir))
        print("\n".join(lines))
        from figspec.output.names import output_stem

        print(f"review page {Path(args.outdir) / (output_stem(Path(args.spec)) + '_diff') / review.PAGE}; "
              "images and summary.txt beside it")
        return EXIT_OK
    except UserError as err:
        return _failed(err)


def _failed(err: UserError) -> int:
    """Print a user error's problems, one line each, and give the exit status for them."""
    for problem in err.problems:
        print(problem.format(), file=sys.stderr)
    return EXIT_USER


def main(argv: Sequence[str] | None = None) -> None:
    """Console entry point."""
    try:
        code = run(argv)
    except KeyboardInterrupt:
        print("figspec: interrupted (Ctrl-C); every output set written is whole, unfinished ones were not written",
              file=sys.stderr)
        code = 130
    sys.exit(code)
