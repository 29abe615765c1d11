/*
 * tw_date.h - calendar dates for study dates and review due dates (proleptic Gregorian).
 */
#ifndef TW_DATE_H
#define TW_DATE_H

typedef struct {
    int year, month, day;
} tw_date;

/* Parse an ISO 8601 calendar date "YYYY-MM-DD", optionally followed by "T..." (time ignored).
 * Checks that the day exists (leap years included). 0 on success, -1 otherwise. */
int tw_date_parse(const char *s, tw_date *out);

/* "YYYY-MM-DD" into buf (at least 11 bytes). */
void tw_date_format(tw_date d, char *buf);

/* The same day n years later; 29 February becomes 28 February in a common year (the earlier
 * day, so a review date never falls late). */
tw_date tw_date_add_years(tw_date d, int years);

/* Days since 1970-01-01 (negative before). */
long tw_date_days(tw_date d);

/* Today's date in UTC. */
tw_date tw_date_today(void);

/* -1, 0 or 1. */
int tw_date_cmp(tw_date a, tw_date b);

#endif
