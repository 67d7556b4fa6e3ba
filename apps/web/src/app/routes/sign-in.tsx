import { Navigate, useNavigate, useSearchParams } from 'react-router-dom';
import { paths, safeNextPath } from '../../config/paths.js';
import { AuthLayout } from '../../components/layouts/auth-layout.js';
import { LoadingState } from '../../components/ui/states.js';
import { TextLink } from '../../components/ui/text-link.js';
import { useMe } from '../../features/auth/api/get-me.js';
import { SignInForm } from '../../features/auth/components/sign-in-form.js';

export function SignInRoute() {
  const [params] = useSearchParams();
  const navigate = useNavigate();
  const me = useMe();
  const next = safeNextPath(params.get('next'));

  if (me.isPending) return <LoadingState className="justify-center" label="Checking your session…" />;
  if (me.data) return <Navigate to={next} replace />;

  return (
    <AuthLayout
      title="Sign in"
      description="Use the e-mail address your administrator invited."
      footer={
        <p>
          Forgotten your password? <TextLink to={paths.auth.forgotPassword.href()}>Get a reset link</TextLink>
        </p>
      }
    >
      <title>Sign in · Counterpoise</title>
      <SignInForm onSignedIn={() => navigate(next, { replace: true })} />
    </AuthLayout>
  );
}
