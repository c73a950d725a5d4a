"""``neve verify``: run the registered verification cases (a thin shell over the library).

Every case of every registered standard (or of ``--standard ID``) is
computed on this machine and printed with its source, inputs, expected and
computed values, tolerance and verdict; ``--format html -o FILE`` writes the
verification manual page.  Exit code 0 when every case passes, 1 otherwise
(2 for bad input, as everywhere).
"""

from __future__ import annotations

import click

from neve.cli.options import format_option, output_option, overwrite_option, standard_option


@click.command("verify")
@standard_option(
    default=None,
    help="Only the cases of this standard (default: every registered standard)",
)
@format_option(
    choices=("text", "json", "html"),
    help="Output: readable text, one JSON object, or the verification manual as an HTML page.",
)
@output_option("Write the report to this file instead of printing it (refused if it exists).")
@overwrite_option("Replace an existing -o file.")
def verify(standard, fmt, output, overwrite) -> None:
    """Run every registered verification case: published table values and equations.

    Each case names its source (standard and clause, book and example
    number, article), its inputs, the expected and computed values and the
    tolerance. Exit code 0 when all pass, 1 otherwise.

    Passing cases show that neve reproduces these values on this machine; they
    do not replace the checks of a licensed design professional.
    """
    from neve.maps.verification import render_verification, verification_report

    if output is not None:
        from neve.safe_write import check_target

        check_target(output, overwrite=overwrite, field="output", parents=True)
    report = verification_report(standard)
    summary = report["summary"]
    if output is None:
        click.echo(render_verification(report, fmt))
    else:
        from neve.maps.verification import write_verification

        write_verification(report, output, fmt, overwrite=overwrite)
        click.echo(
            f"{summary['passed']} of {summary['total']} verification cases pass"
            f" ({', '.join(summary['standards'])}); {summary['failed']} fail."
        )
        click.echo(f"Wrote {fmt}: {output}")
    if not summary["ok"]:
        raise click.exceptions.Exit(1)
