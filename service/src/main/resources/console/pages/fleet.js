// fleet page: to be built.
import { h } from '../dom.js';

export async function render(root) {
  root.append(h('h1', {}, 'fleet'));
}
