"""Run the ``neve serve`` application with uvicorn (the CLI calls :func:`run`)."""

from __future__ import annotations


def run(config, host: str, port: int) -> None:
    """Serve ``config`` on ``host:port`` until interrupted."""
    import uvicorn

    from neve.web.app import create_app

    server = uvicorn.Server(
        uvicorn.Config(
            create_app(config),
            host=host,
            port=port,
            log_level="warning",
            access_log=False,
            server_header=False,
        )  # fmt: skip
    )
    server.run()
