"""The list endpoints' paginator: DRF's limit and offset, with a limit the database can hold."""

from rest_framework.pagination import LimitOffsetPagination


class BoundedLimitOffset(LimitOffsetPagination):
    """DRF passes ?limit= to the database as it is: past 2**63 PostgreSQL answers "bigint out of
    range" and SQLite "datatype mismatch", a 500. A larger limit is cut to max_limit, the most
    the phone asks for in one page. (A huge offset is harmless: past the count DRF returns []
    without a query.)"""

    max_limit = 1000
