"""Reading heftd's alarm outbox (SQLite, read-only) from the alarm process tests.

Not a test itself (imported by test_alarm_https.py and test_alarm_mqtt_tls.py).
"""

import sqlite3
import time


def query(db, sql, *params):
    """All rows of one read-only query."""
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=5)
    try:
        return con.execute(sql, params).fetchall()
    finally:
        con.close()


def wait_delivered(db, channel, timeout):
    """True once the channel has outbox rows and none is pending, within timeout s."""
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        n, pending = query(db, "SELECT count(*), sum(status = 'pending') FROM alarm_outbox "
                               "WHERE channel = ?", channel)[0]
        if n > 0 and not pending:
            return True
        time.sleep(0.2)
    return False


def routed(db, channel):
    """Event ids routed to the channel."""
    return {r[0] for r in query(db, "SELECT event_id FROM alarm_outbox WHERE channel = ?",
                                channel)}
