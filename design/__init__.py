"""The design core: the spec, design rows, and the evaluator as a chain of named stages.

prepare(spec, catalog) -> Context; evaluate(Context, Designs) -> Evaluation (see evaluator.py).
"""
