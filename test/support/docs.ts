/** Reading the worked examples out of the docs. */

/** Each ```js block of a markdown text with the ```text block that follows it (its printed output). */
export function librarySnippets(markdown: string): { code: string; output: string }[] {
  return [...markdown.matchAll(/^```js\n([\s\S]*?)^```\n+```text\n([\s\S]*?)^```/gm)].map((m) => ({ code: m[1]!, output: m[2]! }));
}
