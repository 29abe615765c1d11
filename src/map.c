/* map.c - string -> index hash table, open addressing with linear probing (see tw_map.h). */
#include "tw_map.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

void tw_map_init(tw_map *m)
{
    memset(m, 0, sizeof *m);
}

void tw_map_free(tw_map *m)
{
    free(m->keys);
    free(m->values);
    tw_map_init(m);
}

static uint64_t hash_key(const char *s)
{
    uint64_t h = 1469598103934665603ULL; /* FNV-1a 64-bit offset basis */
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= 1099511628211ULL;
    }
    return h;
}

static size_t find_slot(const char **keys, size_t cap, const char *key)
{
    size_t i = (size_t)hash_key(key) & (cap - 1);
    while (keys[i] && strcmp(keys[i], key) != 0)
        i = (i + 1) & (cap - 1);
    return i;
}

static int grow(tw_map *m)
{
    size_t cap = m->cap ? m->cap * 2 : 64;
    const char **keys = calloc(cap, sizeof *keys);
    size_t *values = calloc(cap, sizeof *values);
    if (!keys || !values) {
        free(keys);
        free(values);
        return -1;
    }
    for (size_t i = 0; i < m->cap; i++) {
        if (!m->keys[i])
            continue;
        size_t j = find_slot(keys, cap, m->keys[i]);
        keys[j] = m->keys[i];
        values[j] = m->values[i];
    }
    free(m->keys);
    free(m->values);
    m->keys = keys;
    m->values = values;
    m->cap = cap;
    return 0;
}

int tw_map_put(tw_map *m, const char *key, size_t value)
{
    /* Keep the load factor under 1/2 so probes stay short. */
    if ((m->count + 1) * 2 > m->cap && grow(m) != 0)
        return -1;
    size_t i = find_slot(m->keys, m->cap, key);
    if (!m->keys[i]) {
        m->keys[i] = key;
        m->count++;
    }
    m->values[i] = value;
    return 0;
}

int tw_map_get(const tw_map *m, const char *key, size_t *value)
{
    if (!m->cap)
        return 0;
    size_t i = find_slot(m->keys, m->cap, key);
    if (!m->keys[i])
        return 0;
    *value = m->values[i];
    return 1;
}
