/*
 * tw_exit.h - the process exit statuses, shared by every stage that decides one.
 *
 * 0 fine, 1 bad data (findings printed), 2 bad usage, 3 I/O error or a result refused on
 * safety grounds (each command documents which).
 */
#ifndef TW_EXIT_H
#define TW_EXIT_H

enum { TW_EXIT_OK = 0, TW_EXIT_DATA = 1, TW_EXIT_USAGE = 2, TW_EXIT_IO = 3 };

#endif
