/**
 * Text columns that hold one of a contract's values (a lot's status, its source's status, a
 * sampling plan, a container's status): the generated row types (server/lib/db-tables.ts) type
 * them as string; these narrow a stored value to the contract's union by checking it, so a value
 * the code does not know fails loudly instead of passing through a cast.
 */
export function oneOf<T extends string>(values: readonly T[], v: string, what: string): T {
  const hit = values.find((x) => x === v);
  if (hit === undefined) throw new Error(`${what} holds the unknown value "${v}"`);
  return hit;
}

/** `oneOf` for a nullable column. */
export function oneOfOrNull<T extends string>(values: readonly T[], v: string | null, what: string): T | null {
  return v === null ? null : oneOf(values, v, what);
}
