/**
 * Joins class names, skipping false, null and undefined (for conditional Tailwind classes).
 * @param parts class strings or falsy values
 */
export function cx(...parts: Array<string | false | null | undefined>): string {
  return parts.filter((p): p is string => typeof p === 'string' && p.length > 0).join(' ');
}
