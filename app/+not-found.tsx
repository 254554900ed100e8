import { NotFoundScreen } from '../src/features/notfound/NotFoundScreen';

export default function NotFound() {
  return <NotFoundScreen />;
}
