import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
  preprocess: vitePreprocess(),
  kit: {
    // The origin check on form posts stays on (SvelteKit's default); ORIGIN sets the public origin.
    adapter: adapter({ out: 'build', precompress: false })
  }
};

export default config;
