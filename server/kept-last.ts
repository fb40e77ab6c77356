/**
 * map's value for key, made and kept when missing; the map holds at most `size` keys, the oldest
 * inserted leaving first (a small bounded cache for pure functions of the key).
 */
export function keptLast<K, V>(map: Map<K, V>, key: K, make: () => V, size = 4): V {
  if (map.has(key)) return map.get(key) as V;
  const value = make();
  map.set(key, value);
  while (map.size > size) map.delete(map.keys().next().value as K);
  return value;
}
