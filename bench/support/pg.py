"""The local PostgreSQL server the benchmarks use, and their throw-away databases."""

from __future__ import annotations


def ensure_database(url: str, who: str = "bench") -> bool:
    """Create the benchmark database if the server is up and it is missing; False (with a
    printed reason) when the server cannot be reached."""
    import psycopg

    name = url.rsplit("/", 1)[-1].split("?", 1)[0]
    server = url.rsplit("/", 1)[0] + "/postgres"
    try:
        with psycopg.connect(server, autocommit=True, connect_timeout=3) as conn:
            found = conn.execute("SELECT 1 FROM pg_database WHERE datname = %s", [name]).fetchone()
            if not found:
                conn.execute(f'CREATE DATABASE "{name}"')
    except psycopg.OperationalError as exc:
        print(f"{who}: PostgreSQL is not reachable ({exc})".strip())
        return False
    return True
