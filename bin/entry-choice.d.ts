/** What the launcher runs for the package folder `root` (see entry-choice.js). */
export function chooseEntry(root: string): { readonly entry: 'dist' | 'sources'; readonly staleDist: boolean };
