/** Entry point of `npm start`: reads the environment and runs the service until a signal stops it. */
import { ConfigError, loadConfig } from './config.js';
import { startService } from './server.js';

try {
  await startService(loadConfig());
} catch (error) {
  if (error instanceof ConfigError) {
    console.error(`segrank: configuration error: ${error.message}`);
    process.exit(78); // EX_CONFIG: the operator must change a setting
  }
  console.error('segrank: failed to start:', error);
  process.exit(1);
}
