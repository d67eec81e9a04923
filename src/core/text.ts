/**
 * A name inside a sentence: its first letter in lower case, the rest as written, so that
 * "Iron(II)" reads "iron(II)" and not "iron(ii)", and "Sodium hypochlorite" reads "sodium hypochlorite".
 */
export function lowerName(name: string): string {
  return name.charAt(0).toLowerCase() + name.slice(1);
}
