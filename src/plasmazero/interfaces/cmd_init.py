"""Write a shipped example scenario into a folder, as a file to edit.

``plasmazero init DIR --example NAME`` copies the scenario; its ``mechanism`` names a
shipped mechanism, which resolves from any folder. An existing file is not overwritten
unless ``--force`` is given.
"""

from pathlib import Path

from plasmazero.data.errors import InputError, format_problem
from plasmazero.workflows.examples import DEMO, example_path


def add_arguments(parser):
    parser.add_argument("folder", help="folder to write the scenario into (created if missing)")
    parser.add_argument("--example", default=DEMO, help=f"example name (default {DEMO}; see plasmazero examples)")
    parser.add_argument("--force", action="store_true", help="overwrite an existing file")


def run(args):
    source = example_path(args.example)
    folder = Path(args.folder)
    if folder.exists() and not folder.is_dir():
        raise InputError([format_problem(folder, None, "exists and is not a folder")])
    folder.mkdir(parents=True, exist_ok=True)
    target = folder / source.name
    if target.exists() and not args.force:
        raise InputError([format_problem(target, None, "already exists (use --force to overwrite)")])
    target.write_text(source.read_text(encoding="utf-8"), encoding="utf-8")
    print(f"wrote {target}; run it with: plasmazero run {target} -o {target.with_suffix('.h5')}")
    return 0
