/** Catches a screen that fails to draw, so the user sees what happened instead of a blank window. */
import { Component, type ErrorInfo, type ReactNode } from 'react';

interface State {
  error: Error | null;
}

export class ScreenBoundary extends Component<{ children: ReactNode; name: string }, State> {
  override state: State = { error: null };

  static getDerivedStateFromError(error: Error): State {
    return { error };
  }

  override componentDidCatch(error: Error, info: ErrorInfo): void {
    console.error(`screen ${this.props.name} failed`, error, info.componentStack);
  }

  override render(): ReactNode {
    if (!this.state.error) return this.props.children;
    return (
      <div className="banner banner-error" role="alert" data-testid="screen-error">
        <strong>The {this.props.name} screen could not be drawn.</strong> {this.state.error.message}
        <p>
          Nothing you entered is lost: the draft is kept and the other screens still work. If this followed an
          edit, undo it on the screen where you made it.
        </p>
        <button onClick={() => this.setState({ error: null })}>Try again</button>
      </div>
    );
  }
}
