import { ALL_CAUTIONS } from '../../src/core/safety.js';

const app = document.getElementById('app')!;
const title = document.createElement('h1');
title.textContent = 'glowprint bench';
app.append(title);
const list = document.createElement('ul');
for (const c of ALL_CAUTIONS) {
  const li = document.createElement('li');
  li.textContent = c;
  list.append(li);
}
app.append(list);
