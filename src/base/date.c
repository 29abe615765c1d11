/* date.c - calendar dates (see tw_date.h). */
#include "base/tw_date.h"

#include <ctype.h>
#include <stdio.h>
#include <time.h>

static int is_leap(int y)
{
    return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
}

static int days_in_month(int y, int m)
{
    static const int days[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    return m == 2 && is_leap(y) ? 29 : days[m - 1];
}

static int digits(const char *s, int n, int *out)
{
    int v = 0;
    for (int i = 0; i < n; i++) {
        if (!isdigit((unsigned char)s[i]))
            return -1;
        v = v * 10 + (s[i] - '0');
    }
    *out = v;
    return 0;
}

int tw_date_parse(const char *s, tw_date *out)
{
    tw_date d;
    if (!s || digits(s, 4, &d.year) || s[4] != '-' || digits(s + 5, 2, &d.month) || s[7] != '-' ||
        digits(s + 8, 2, &d.day))
        return -1;
    if (s[10] != '\0' && s[10] != 'T' && s[10] != ' ')
        return -1;
    if (d.year < 1900 || d.month < 1 || d.month > 12 || d.day < 1 ||
        d.day > days_in_month(d.year, d.month))
        return -1;
    *out = d;
    return 0;
}

void tw_date_format(tw_date d, char *buf)
{
    unsigned y = (unsigned)d.year % 10000u, m = (unsigned)d.month % 13u, dd = (unsigned)d.day % 32u;
    buf[0] = (char)('0' + y / 1000);
    buf[1] = (char)('0' + y / 100 % 10);
    buf[2] = (char)('0' + y / 10 % 10);
    buf[3] = (char)('0' + y % 10);
    buf[4] = '-';
    buf[5] = (char)('0' + m / 10);
    buf[6] = (char)('0' + m % 10);
    buf[7] = '-';
    buf[8] = (char)('0' + dd / 10);
    buf[9] = (char)('0' + dd % 10);
    buf[10] = '\0';
}

tw_date tw_date_add_years(tw_date d, int years)
{
    d.year += years;
    if (d.month == 2 && d.day == 29 && !is_leap(d.year))
        d.day = 28;
    return d;
}

/* Days from civil, after H. Hinnant's public-domain algorithm. */
long tw_date_days(tw_date d)
{
    long y = d.year - (d.month <= 2);
    long era = (y >= 0 ? y : y - 399) / 400;
    long yoe = y - era * 400;
    long mp = (d.month + 9) % 12;
    long doy = (153 * mp + 2) / 5 + d.day - 1;
    long doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    return era * 146097 + doe - 719468;
}

tw_date tw_date_today(void)
{
    time_t now = time(NULL);
    struct tm tm;
    gmtime_r(&now, &tm);
    tw_date d = {tm.tm_year + 1900, tm.tm_mon + 1, tm.tm_mday};
    return d;
}

int tw_date_cmp(tw_date a, tw_date b)
{
    long x = tw_date_days(a), y = tw_date_days(b);
    return (x > y) - (x < y);
}
