/* map.c - string -> index hash table, open addressing with linear probing (see tw_map.h). */
#include "base/tw_map.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

void tw_map_init(tw_map *m)
{
    memset(m, 0, sizeof *m);
}

void tw_map_free(tw_map *m)
{
    free(m->slots);
    tw_map_init(m);
}

static size_t hash_key(const char *s)
{
    uint64_t h = 1469598103934665603ULL; /* FNV-1a 64-bit offset basis */
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= 1099511628211ULL;
    }
    return (size_t)h;
}

/* The slot holding key, or the empty slot where it belongs. The stored hash is compared
 * first: a probe past another key then costs no visit to that key's bytes. */
static size_t find_slot(const tw_map_slot *slots, size_t cap, const char *key, size_t h)
{
    size_t i = h & (cap - 1);
    while (slots[i].key && (slots[i].hash != h || strcmp(slots[i].key, key) != 0))
        i = (i + 1) & (cap - 1);
    return i;
}

static int resize(tw_map *m, size_t cap)
{
    tw_map_slot *slots = calloc(cap, sizeof *slots);
    if (!slots)
        return -1;
    for (size_t i = 0; i < m->cap; i++) {
        const tw_map_slot *s = &m->slots[i];
        if (s->key) {
            size_t j = s->hash & (cap - 1);
            while (slots[j].key)
                j = (j + 1) & (cap - 1);
            slots[j] = *s;
        }
    }
    free(m->slots);
    m->slots = slots;
    m->cap = cap;
    return 0;
}

int tw_map_reserve(tw_map *m, size_t n)
{
    /* Keep the load factor at most 1/2 so probes stay short. */
    size_t cap = m->cap ? m->cap : 64;
    while (cap / 2 < n) {
        if (cap > SIZE_MAX / 2 / sizeof(tw_map_slot))
            return -1;
        cap *= 2;
    }
    return cap == m->cap ? 0 : resize(m, cap);
}

int tw_map_get_or_put(tw_map *m, const char *key, size_t value, size_t *found)
{
    if (tw_map_reserve(m, m->count + 1) != 0)
        return -1;
    size_t h = hash_key(key);
    size_t i = find_slot(m->slots, m->cap, key, h);
    if (m->slots[i].key) {
        *found = m->slots[i].value;
        return 1;
    }
    m->slots[i] = (tw_map_slot){key, h, value};
    m->count++;
    return 0;
}

int tw_map_put(tw_map *m, const char *key, size_t value)
{
    if (tw_map_reserve(m, m->count + 1) != 0)
        return -1;
    size_t h = hash_key(key);
    size_t i = find_slot(m->slots, m->cap, key, h);
    if (!m->slots[i].key) {
        m->slots[i].key = key;
        m->slots[i].hash = h;
        m->count++;
    }
    m->slots[i].value = value;
    return 0;
}

int tw_map_get(const tw_map *m, const char *key, size_t *value)
{
    if (!m->cap)
        return 0;
    size_t i = find_slot(m->slots, m->cap, key, hash_key(key));
    if (!m->slots[i].key)
        return 0;
    *value = m->slots[i].value;
    return 1;
}
