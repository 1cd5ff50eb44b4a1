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


def settle(cursor, wait_s: float = 60.0) -> float:
    """Let the server finish what earlier benchmarks left it doing before timing queries.

    Writes a checkpoint and waits (up to ``wait_s``) while autovacuum workers are busy:
    the import and quality benchmarks write and delete hundreds of thousands of rows, and
    the vacuum that follows would otherwise share the two cores with the timed queries.
    Returns the seconds waited.
    """
    import time

    from django.db import DatabaseError

    t0 = time.perf_counter()
    try:
        cursor.execute("CHECKPOINT")
    except DatabaseError:  # needs superuser or pg_checkpoint; the wait below still helps
        pass
    while time.perf_counter() - t0 < wait_s:
        cursor.execute(
            "SELECT count(*) FROM pg_stat_activity WHERE backend_type = 'autovacuum worker'"
        )
        if cursor.fetchone()[0] == 0:
            break
        time.sleep(1.0)
    return time.perf_counter() - t0
