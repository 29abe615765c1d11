/*
 * tw_map.h - a string -> index hash table (open addressing, FNV-1a), so that grouping rows by
 * equipment ID and looking up manifest entries stay linear in the number of rows.
 *
 * Keys are not copied: the caller keeps them alive for the life of the map.
 */
#ifndef TW_MAP_H
#define TW_MAP_H

#include <stddef.h>

typedef struct {
    const char *key;    /* NULL: an empty slot */
    size_t hash;
    size_t value;
} tw_map_slot;

typedef struct {
    tw_map_slot *slots;
    size_t cap, count;
} tw_map;

/* Start an empty map. */
void tw_map_init(tw_map *m);

/* Free the table (not the keys). Accepts a zeroed map. */
void tw_map_free(tw_map *m);

/* Set key -> value, replacing an earlier value. 0 on success, -1 when out of memory. */
int tw_map_put(tw_map *m, const char *key, size_t value);

/* Room for n keys in all without growing. 0, or -1 when out of memory. */
int tw_map_reserve(tw_map *m, size_t n);

/* One lookup for "find or add": 1 and *found set when key is present (the map unchanged), 0
 * when key -> value was added, -1 when out of memory. */
int tw_map_get_or_put(tw_map *m, const char *key, size_t value, size_t *found);

/* 1 and *value set when key is present, else 0. */
int tw_map_get(const tw_map *m, const char *key, size_t *value);

#endif
