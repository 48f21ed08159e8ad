"""List the shipped example scenarios.

``plasmazero examples``: name, mechanism and description of each; start from one with
``plasmazero init DIR --example NAME``.
"""

from plasmazero.workflows.examples import DEMO, describe, example_paths


def add_arguments(parser):
    pass


def run(args):
    for name in example_paths():
        mech, text = describe(name)
        flag = "  (the demo)" if name == DEMO else ""
        print(f"{name:28s} mechanism {mech:8s} {text}{flag}")
    return 0
